// The guardband extension: starts `guardband lsp` for .guard files and
// passes the settings on. Everything else (diagnostics, hovers, quick
// fixes, formatting) comes from the language server.

import * as vscode from "vscode";
import {
  LanguageClient,
  LanguageClientOptions,
  ServerOptions,
} from "vscode-languageclient/node";

let client: LanguageClient | undefined;

function settings() {
  const config = vscode.workspace.getConfiguration("guardband");
  return {
    path: config.get<string>("path", "guardband"),
    debounceMs: config.get<number>("debounceMs", 150),
    inlayHints: config.get<boolean>("inlayHints", true),
  };
}

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  const { path, debounceMs, inlayHints } = settings();
  const serverOptions: ServerOptions = {
    command: path,
    args: ["lsp"],
  };
  const clientOptions: LanguageClientOptions = {
    documentSelector: [{ scheme: "file", language: "guard" }],
    initializationOptions: { debounceMs, inlayHints },
    synchronize: {
      configurationSection: "guardband",
      fileEvents: [
        vscode.workspace.createFileSystemWatcher("**/*.guard"),
        vscode.workspace.createFileSystemWatcher("**/guardband.toml"),
      ],
    },
  };
  client = new LanguageClient("guardband", "guardband", serverOptions, clientOptions);
  context.subscriptions.push(
    vscode.workspace.onDidChangeConfiguration(async (event) => {
      if (event.affectsConfiguration("guardband.path") && client) {
        // A new binary needs a new server.
        await client.stop();
        await activate(context);
      }
    }),
  );
  try {
    await client.start();
  } catch (err) {
    void vscode.window.showErrorMessage(
      `guardband: cannot start \`${path} lsp\` (${String(err)}). Install guardband or set guardband.path.`,
    );
  }
}

export async function deactivate(): Promise<void> {
  if (client) {
    await client.stop();
  }
}
