//! The LSP front: protocol handlers over the document store and the engine.
//!
//! Threading: handlers run concurrently on the tokio runtime. Document
//! notifications change [`State`] under a `std` mutex that is never held
//! across an `.await`, so edits apply in arrival order. Checks and queries
//! run on the engine's big-stack worker threads ([`Workers`]); a panic there
//! is caught and answered as an internal error.

use crate::documents::{ChangeError, Document, Documents, uri_path};
use crate::encoding::Encoding;
use crate::engine::{Analysis, Workers};
use crate::features;
use serde_json::Value;
use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, MutexGuard};
use std::time::Duration;
use tower_lsp_server::jsonrpc::{Error, Result};
use tower_lsp_server::ls_types::*;
use tower_lsp_server::{Client, LanguageServer};

/// Settings a client can change.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// Quiet time after the last edit before the check runs.
    pub debounce: Duration,
    /// Whether inlay hints are shown.
    pub inlay_hints: bool,
}

impl Default for Settings {
    fn default() -> Settings {
        Settings {
            debounce: Duration::from_millis(150),
            inlay_hints: true,
        }
    }
}

impl Settings {
    /// Applies `{"debounceMs": n, "inlayHints": b}`, also when nested under `guardband`.
    pub fn update(&mut self, value: &Value) {
        let value = value.get("guardband").unwrap_or(value);
        if let Some(ms) = value.get("debounceMs").and_then(Value::as_u64) {
            self.debounce = Duration::from_millis(ms.min(10_000));
        }
        if let Some(on) = value.get("inlayHints").and_then(Value::as_bool) {
            self.inlay_hints = on;
        }
    }
}

/// What the client said it can do, as far as the server cares.
#[derive(Debug, Default, Clone)]
struct ClientSupport {
    pull_diagnostics: bool,
    configuration: bool,
    watch_dynamic: bool,
    related_information: bool,
}

/// Mutable server state; see the module documentation for the locking rule.
#[derive(Default)]
struct State {
    docs: Documents,
    encoding: Encoding,
    settings: Settings,
    folders: Vec<PathBuf>,
    support: ClientSupport,
    /// The latest analysis per workspace root (one per root, so bounded).
    analyses: HashMap<PathBuf, Arc<Analysis>>,
    /// Bumped on every edit under a root; a debounced check runs only if
    /// no newer edit came in meanwhile.
    generation: HashMap<PathBuf, u64>,
    /// Files outside the open set that were given diagnostics (guardband.toml).
    published_extra: HashSet<Uri>,
}

/// The language server.
pub struct Backend {
    client: Client,
    state: Arc<Mutex<State>>,
    workers: Arc<Workers>,
    shutdown: Arc<AtomicBool>,
    /// Held while diagnostics are sent, so that a check that finishes late
    /// cannot send an older version after a newer one.
    publishing: Arc<tokio::sync::Mutex<()>>,
}

/// Most roots the server keeps analyses for; older ones are dropped.
const MAX_ROOTS: usize = 16;

impl Backend {
    /// A server talking to `client`; `shutdown` is set when `shutdown` arrives.
    pub fn new(client: Client, shutdown: Arc<AtomicBool>) -> Backend {
        Backend {
            client,
            state: Arc::new(Mutex::new(State::default())),
            workers: Workers::start(2),
            shutdown,
            publishing: Arc::new(tokio::sync::Mutex::new(())),
        }
    }

    fn state(&self) -> MutexGuard<'_, State> {
        // A panic while holding the lock leaves consistent data (edits are
        // whole-string replacements), so a poisoned lock is still usable.
        self.state.lock().unwrap_or_else(|p| p.into_inner())
    }

    async fn log(&self, message: impl std::fmt::Display) {
        self.client.log_message(MessageType::LOG, message).await;
    }

    /// The open documents under `root`, copied.
    fn documents_under(state: &State, root: &Path) -> Vec<Document> {
        state
            .docs
            .all()
            .filter(|d| d.root == root)
            .cloned()
            .collect()
    }

    /// An analysis of the current text under `root`, reusing the cached one
    /// when nothing changed since.
    async fn analysis_of_root(&self, root: PathBuf) -> Result<Arc<Analysis>> {
        let docs = {
            let state = self.state();
            let docs = Self::documents_under(&state, &root);
            if let Some(a) = state.analyses.get(&root)
                && a.is_current(&docs)
            {
                return Ok(Arc::clone(a));
            }
            docs
        };
        let computed = {
            let root = root.clone();
            self.workers
                .run(move || Analysis::compute(&root, &docs))
                .await
        };
        match computed {
            Ok(Ok(analysis)) => {
                let analysis = Arc::new(analysis);
                let mut state = self.state();
                if state.analyses.len() >= MAX_ROOTS && !state.analyses.contains_key(&root) {
                    state.analyses.clear();
                }
                // Two checks of one root can overlap; never let the one that
                // finishes last replace a cached analysis of newer text.
                let now = Self::documents_under(&state, &root);
                let keep_cached = state
                    .analyses
                    .get(&root)
                    .is_some_and(|a| a.is_current(&now) && !analysis.is_current(&now));
                let old = if keep_cached {
                    None
                } else {
                    state.analyses.insert(root, Arc::clone(&analysis))
                };
                drop(state);
                // Freeing a large analysis takes a while; not on the way to the diagnostics.
                if let Some(old) = old {
                    tokio::task::spawn_blocking(move || drop(old));
                }
                Ok(analysis)
            }
            Ok(Err(why)) => {
                self.log(format!("guardband: check failed: {why}")).await;
                Err(Error::internal_error())
            }
            Err(panic) => {
                self.log(format!("guardband: internal error in the check: {panic}"))
                    .await;
                Err(Error::internal_error())
            }
        }
    }

    /// The analysis holding `uri` and the file's id in it.
    async fn analysis_for(
        &self,
        uri: &Uri,
    ) -> Result<Option<(Arc<Analysis>, guardband_model::FileId)>> {
        let (root, path) = {
            let state = self.state();
            let Some(doc) = state.docs.get(uri) else {
                return Ok(None);
            };
            (doc.root.clone(), doc.path.clone())
        };
        let analysis = self.analysis_of_root(root).await?;
        Ok(analysis.file_id(&path).map(|id| (analysis, id)))
    }

    /// Runs a query against the current analysis of `uri` on a worker.
    async fn query<T: Send + 'static>(
        &self,
        uri: &Uri,
        work: impl FnOnce(&Analysis, guardband_model::FileId, Encoding, Settings) -> T + Send + 'static,
    ) -> Result<Option<T>> {
        let Some((analysis, file)) = self.analysis_for(uri).await? else {
            return Ok(None);
        };
        let (encoding, settings) = {
            let s = self.state();
            (s.encoding, s.settings)
        };
        match self
            .workers
            .run(move || work(&analysis, file, encoding, settings))
            .await
        {
            Ok(v) => Ok(Some(v)),
            Err(panic) => {
                self.log(format!(
                    "guardband: internal error answering a request: {panic}"
                ))
                .await;
                Err(Error::internal_error())
            }
        }
    }

    /// [`Backend::query`] at an LSP position, converted (in the negotiated
    /// encoding) to the byte offset the features take: together with
    /// [`Backend::query_within`], the one place positions are read.
    async fn query_at<T: Send + 'static>(
        &self,
        uri: &Uri,
        position: Position,
        work: impl FnOnce(&Analysis, guardband_model::FileId, usize, Encoding, Settings) -> T
        + Send
        + 'static,
    ) -> Result<Option<T>> {
        self.query(uri, move |a, file, encoding, settings| {
            let at = encoding.offset(a.checked.ws.file(file).line_index(), position);
            work(a, file, at, encoding, settings)
        })
        .await
    }

    /// [`Backend::query`] over an LSP range, converted to a byte span
    /// (start before end, whichever order the client sent).
    async fn query_within<T: Send + 'static>(
        &self,
        uri: &Uri,
        range: Range,
        work: impl FnOnce(
            &Analysis,
            guardband_model::FileId,
            std::ops::Range<usize>,
            Encoding,
            Settings,
        ) -> T
        + Send
        + 'static,
    ) -> Result<Option<T>> {
        self.query(uri, move |a, file, encoding, settings| {
            let index = a.checked.ws.file(file).line_index();
            let (x, y) = (
                encoding.offset(index, range.start),
                encoding.offset(index, range.end),
            );
            work(a, file, x.min(y)..x.max(y), encoding, settings)
        })
        .await
    }

    /// Schedules a debounced check of `root`.
    fn schedule(&self, root: PathBuf) {
        let (generation, delay) = {
            let mut state = self.state();
            let g = state.generation.entry(root.clone()).or_insert(0);
            *g += 1;
            (*g, state.settings.debounce)
        };
        let backend = self.handle();
        tokio::spawn(async move {
            tokio::time::sleep(delay).await;
            let current = backend.state().generation.get(&root).copied();
            if current == Some(generation) {
                backend.publish_root(root).await;
            }
        });
    }

    /// Schedules a check of every root with open documents (a file changed on disk).
    fn schedule_all(&self) {
        let roots = open_roots(&self.state());
        for root in roots {
            self.schedule(root);
        }
    }

    /// A second handle on the same server, for spawned tasks.
    fn handle(&self) -> Backend {
        Backend {
            client: self.client.clone(),
            state: Arc::clone(&self.state),
            workers: Arc::clone(&self.workers),
            shutdown: Arc::clone(&self.shutdown),
            publishing: Arc::clone(&self.publishing),
        }
    }

    /// Checks a root and publishes diagnostics for each open document whose
    /// text has not changed since; results for older versions are dropped.
    async fn publish_root(&self, root: PathBuf) {
        let pull = self.state().support.pull_diagnostics;
        let Ok(analysis) = self.analysis_of_root(root).await else {
            return;
        };
        if pull {
            let _ = self.client.workspace_diagnostic_refresh().await;
            return;
        }
        let (encoding, related, current, previous_extra) = {
            let state = self.state();
            let current: HashMap<PathBuf, (Uri, i32)> = state
                .docs
                .all()
                .map(|d| (d.path.clone(), (d.uri.clone(), d.version)))
                .collect();
            (
                state.encoding,
                state.support.related_information,
                current,
                state.published_extra.clone(),
            )
        };
        let mut batches = Vec::new();
        // (configuration file, whether it now has diagnostics)
        let mut extra: Vec<(Uri, bool)> = Vec::new();
        for file in &analysis.checked.ws.files {
            // Only open documents and the configuration file are published;
            // imported files that are not open are skipped before converting.
            let convert = || features::diagnostics::convert(&analysis, file.id, encoding, related);
            match current.get(&file.path) {
                Some((uri, version)) if analysis.versions.get(&file.path) == Some(version) => {
                    batches.push((uri.clone(), convert(), Some(*version)));
                }
                Some(_) => {}
                None if file.path.file_name().is_some_and(|n| n == "guardband.toml") => {
                    if let Some(uri) = analysis.uri(file.id) {
                        let diagnostics = convert();
                        extra.push((uri.clone(), !diagnostics.is_empty()));
                        if !diagnostics.is_empty() || previous_extra.contains(&uri) {
                            batches.push((uri, diagnostics, None));
                        }
                    }
                }
                None => {}
            }
        }
        {
            let mut state = self.state();
            for (uri, has_diagnostics) in extra {
                if has_diagnostics {
                    state.published_extra.insert(uri);
                } else {
                    state.published_extra.remove(&uri);
                }
            }
        }
        // Checked again under the lock: a newer version may have been
        // published since the batches were made.
        let _publishing = self.publishing.lock().await;
        let now: HashMap<Uri, i32> = self
            .state()
            .docs
            .all()
            .map(|d| (d.uri.clone(), d.version))
            .collect();
        for (uri, diagnostics, version) in batches {
            if version.is_some_and(|v| now.get(&uri) != Some(&v)) {
                continue;
            }
            self.client
                .publish_diagnostics(uri, diagnostics, version)
                .await;
        }
    }

    /// A handler that panics, registered only under `GUARDBAND_LSP_TEST_HOOKS`,
    /// so that the tests can prove a panic becomes an internal error.
    pub async fn test_panic(&self) -> Result<()> {
        panic!("deliberate panic for the tests");
    }

    /// Reads the client's settings through `workspace/configuration`, if it supports that.
    async fn pull_configuration(&self) {
        if !self.state().support.configuration {
            return;
        }
        let items = vec![ConfigurationItem {
            scope_uri: None,
            section: Some("guardband".into()),
        }];
        if let Ok(values) = self.client.configuration(items).await
            && let Some(v) = values.first()
        {
            self.state().settings.update(v);
        }
    }
}

/// Each workspace root with open documents.
fn open_roots(state: &State) -> Vec<PathBuf> {
    let mut roots: Vec<PathBuf> = state.docs.all().map(|d| d.root.clone()).collect();
    roots.sort();
    roots.dedup();
    roots
}

fn capabilities(encoding: Encoding, pull: bool) -> ServerCapabilities {
    ServerCapabilities {
        position_encoding: Some(encoding.kind()),
        text_document_sync: Some(TextDocumentSyncCapability::Options(
            TextDocumentSyncOptions {
                open_close: Some(true),
                change: Some(TextDocumentSyncKind::INCREMENTAL),
                save: Some(TextDocumentSyncSaveOptions::Supported(true)),
                ..Default::default()
            },
        )),
        hover_provider: Some(HoverProviderCapability::Simple(true)),
        completion_provider: Some(CompletionOptions {
            trigger_characters: Some(vec![".".into(), "=".into(), " ".into()]),
            ..Default::default()
        }),
        definition_provider: Some(OneOf::Left(true)),
        references_provider: Some(OneOf::Left(true)),
        rename_provider: Some(OneOf::Right(RenameOptions {
            prepare_provider: Some(true),
            work_done_progress_options: Default::default(),
        })),
        document_symbol_provider: Some(OneOf::Left(true)),
        workspace_symbol_provider: Some(OneOf::Left(true)),
        semantic_tokens_provider: Some(SemanticTokensServerCapabilities::SemanticTokensOptions(
            SemanticTokensOptions {
                legend: features::tokens::legend(),
                full: Some(SemanticTokensFullOptions::Bool(true)),
                range: Some(true),
                ..Default::default()
            },
        )),
        code_action_provider: Some(CodeActionProviderCapability::Options(CodeActionOptions {
            code_action_kinds: Some(vec![
                CodeActionKind::QUICKFIX,
                CodeActionKind::SOURCE_FIX_ALL,
            ]),
            ..Default::default()
        })),
        document_formatting_provider: Some(OneOf::Left(true)),
        inlay_hint_provider: Some(OneOf::Left(true)),
        diagnostic_provider: pull.then(|| {
            DiagnosticServerCapabilities::Options(DiagnosticOptions {
                identifier: Some("guardband".into()),
                inter_file_dependencies: true,
                workspace_diagnostics: false,
                ..Default::default()
            })
        }),
        ..Default::default()
    }
}

impl LanguageServer for Backend {
    async fn initialize(&self, params: InitializeParams) -> Result<InitializeResult> {
        let caps = &params.capabilities;
        let encoding = Encoding::negotiate(
            caps.general
                .as_ref()
                .and_then(|g| g.position_encodings.as_deref()),
        );
        let text = caps.text_document.as_ref();
        let workspace = caps.workspace.as_ref();
        let support = ClientSupport {
            pull_diagnostics: text.is_some_and(|t| t.diagnostic.is_some()),
            configuration: workspace.and_then(|w| w.configuration) == Some(true),
            watch_dynamic: workspace
                .and_then(|w| w.did_change_watched_files.as_ref())
                .and_then(|d| d.dynamic_registration)
                == Some(true),
            related_information: text
                .and_then(|t| t.publish_diagnostics.as_ref())
                .and_then(|p| p.related_information)
                .unwrap_or(true),
        };
        let mut folders: Vec<PathBuf> = params
            .workspace_folders
            .iter()
            .flatten()
            .map(|f| uri_path(&f.uri))
            .collect();
        #[allow(deprecated)]
        if folders.is_empty()
            && let Some(root) = &params.root_uri
        {
            folders.push(uri_path(root));
        }
        let pull = support.pull_diagnostics;
        {
            let mut state = self.state();
            state.encoding = encoding;
            state.support = support;
            state.folders = folders;
            if let Some(options) = &params.initialization_options {
                state.settings.update(options);
            }
        }
        Ok(InitializeResult {
            capabilities: capabilities(encoding, pull),
            server_info: Some(ServerInfo {
                name: "guardband".into(),
                version: Some(env!("CARGO_PKG_VERSION").into()),
            }),
            offset_encoding: None,
        })
    }

    async fn initialized(&self, _: InitializedParams) {
        if self.state().support.watch_dynamic {
            let options = DidChangeWatchedFilesRegistrationOptions {
                watchers: ["**/*.guard", "**/guardband.toml"]
                    .into_iter()
                    .map(|glob| FileSystemWatcher {
                        glob_pattern: GlobPattern::String(glob.into()),
                        kind: None,
                    })
                    .collect(),
            };
            let registration = Registration {
                id: "guardband-watch".into(),
                method: "workspace/didChangeWatchedFiles".into(),
                register_options: serde_json::to_value(options).ok(),
            };
            if let Err(e) = self.client.register_capability(vec![registration]).await {
                self.log(format!("guardband: file watching not registered: {e}"))
                    .await;
            }
        }
        self.pull_configuration().await;
    }

    async fn shutdown(&self) -> Result<()> {
        self.shutdown.store(true, Ordering::SeqCst);
        Ok(())
    }

    async fn did_open(&self, params: DidOpenTextDocumentParams) {
        let doc = params.text_document;
        let root = {
            let mut state = self.state();
            let folders = state.folders.clone();
            state
                .docs
                .open(doc.uri, doc.text, doc.version, &folders)
                .root
                .clone()
        };
        self.schedule(root);
    }

    async fn did_change(&self, params: DidChangeTextDocumentParams) {
        let uri = params.text_document.uri;
        let outcome = {
            let mut state = self.state();
            let encoding = state.encoding;
            state
                .docs
                .change(
                    &uri,
                    params.text_document.version,
                    params.content_changes,
                    encoding,
                )
                .map(|()| state.docs.get(&uri).map(|d| d.root.clone()))
        };
        match outcome {
            Ok(Some(root)) => self.schedule(root),
            Ok(None) => {}
            Err(ChangeError::NotOpen) => {
                self.log(format!(
                    "guardband: ignored a change to {}, which is not open",
                    uri.as_str()
                ))
                .await
            }
            Err(ChangeError::StaleVersion { have, got }) => {
                self.log(format!(
                    "guardband: ignored version {got} of {}, already at {have}",
                    uri.as_str()
                ))
                .await
            }
        }
    }

    async fn did_save(&self, params: DidSaveTextDocumentParams) {
        let root = self
            .state()
            .docs
            .get(&params.text_document.uri)
            .map(|d| d.root.clone());
        if let Some(root) = root {
            self.schedule(root);
        }
    }

    async fn did_close(&self, params: DidCloseTextDocumentParams) {
        let uri = params.text_document.uri;
        let closed = self.state().docs.close(&uri);
        if let Some(doc) = closed {
            if !self.state().support.pull_diagnostics {
                self.client.publish_diagnostics(uri, Vec::new(), None).await;
            }
            self.schedule(doc.root);
        }
    }

    async fn did_change_watched_files(&self, _: DidChangeWatchedFilesParams) {
        // Files on disk changed: no cached analysis can be trusted, and a
        // guardband.toml may have come or gone.
        {
            let mut state = self.state();
            state.analyses.clear();
            let folders = state.folders.clone();
            state.docs.reroot(&folders);
        }
        self.schedule_all();
    }

    async fn did_change_configuration(&self, params: DidChangeConfigurationParams) {
        let before = self.state().settings;
        if params.settings.is_null() {
            self.pull_configuration().await;
        } else {
            self.state().settings.update(&params.settings);
        }
        let after = self.state().settings;
        if before.inlay_hints != after.inlay_hints {
            let _ = self.client.inlay_hint_refresh().await;
        }
    }

    async fn diagnostic(
        &self,
        params: DocumentDiagnosticParams,
    ) -> Result<DocumentDiagnosticReportResult> {
        let related = self.state().support.related_information;
        let items = self
            .query(&params.text_document.uri, move |a, file, enc, _| {
                features::diagnostics::convert(a, file, enc, related)
            })
            .await?
            .unwrap_or_default();
        Ok(DocumentDiagnosticReportResult::Report(
            DocumentDiagnosticReport::Full(RelatedFullDocumentDiagnosticReport {
                related_documents: None,
                full_document_diagnostic_report: FullDocumentDiagnosticReport {
                    result_id: None,
                    items,
                },
            }),
        ))
    }

    async fn hover(&self, params: HoverParams) -> Result<Option<Hover>> {
        let p = params.text_document_position_params;
        Ok(self
            .query_at(&p.text_document.uri, p.position, |a, file, at, _, _| {
                features::hover::hover(a, file, at)
            })
            .await?
            .flatten())
    }

    async fn goto_definition(
        &self,
        params: GotoDefinitionParams,
    ) -> Result<Option<GotoDefinitionResponse>> {
        let p = params.text_document_position_params;
        Ok(self
            .query_at(&p.text_document.uri, p.position, |a, file, at, enc, _| {
                features::navigate::definition(a, file, at, enc)
            })
            .await?
            .flatten()
            .map(GotoDefinitionResponse::Scalar))
    }

    async fn references(&self, params: ReferenceParams) -> Result<Option<Vec<Location>>> {
        let p = params.text_document_position;
        let include = params.context.include_declaration;
        Ok(self
            .query_at(
                &p.text_document.uri,
                p.position,
                move |a, file, at, enc, _| {
                    features::navigate::references(a, file, at, include, enc)
                },
            )
            .await?
            .flatten())
    }

    async fn prepare_rename(
        &self,
        params: TextDocumentPositionParams,
    ) -> Result<Option<PrepareRenameResponse>> {
        Ok(self
            .query_at(
                &params.text_document.uri,
                params.position,
                |a, file, at, enc, _| features::navigate::prepare_rename(a, file, at, enc),
            )
            .await?
            .flatten())
    }

    async fn rename(&self, params: RenameParams) -> Result<Option<WorkspaceEdit>> {
        let p = params.text_document_position;
        let new_name = params.new_name;
        match self
            .query_at(
                &p.text_document.uri,
                p.position,
                move |a, file, at, enc, _| features::navigate::rename(a, file, at, &new_name, enc),
            )
            .await?
        {
            None => Ok(None),
            Some(Ok(edit)) => Ok(edit),
            Some(Err(why)) => Err(Error::invalid_params(why)),
        }
    }

    async fn completion(&self, params: CompletionParams) -> Result<Option<CompletionResponse>> {
        let p = params.text_document_position;
        Ok(self
            .query_at(&p.text_document.uri, p.position, |a, file, at, _, _| {
                features::complete::complete(a, file, at)
            })
            .await?
            .map(CompletionResponse::Array))
    }

    async fn document_symbol(
        &self,
        params: DocumentSymbolParams,
    ) -> Result<Option<DocumentSymbolResponse>> {
        Ok(self
            .query(&params.text_document.uri, |a, file, enc, _| {
                features::symbols::document(a, file, enc)
            })
            .await?
            .map(DocumentSymbolResponse::Nested))
    }

    async fn symbol(
        &self,
        params: WorkspaceSymbolParams,
    ) -> Result<Option<WorkspaceSymbolResponse>> {
        let roots = open_roots(&self.state());
        let encoding = self.state().encoding;
        let mut out = Vec::new();
        for root in roots {
            let analysis = self.analysis_of_root(root).await?;
            let query = params.query.clone();
            let found = self
                .workers
                .run(move || features::symbols::workspace(&analysis, &query, encoding))
                .await
                .map_err(|_| Error::internal_error())?;
            out.extend(found);
        }
        Ok(Some(WorkspaceSymbolResponse::Nested(out)))
    }

    async fn semantic_tokens_full(
        &self,
        params: SemanticTokensParams,
    ) -> Result<Option<SemanticTokensResult>> {
        Ok(self
            .query(&params.text_document.uri, |a, file, enc, _| {
                features::tokens::tokens(a, file, None, enc)
            })
            .await?
            .map(SemanticTokensResult::Tokens))
    }

    async fn semantic_tokens_range(
        &self,
        params: SemanticTokensRangeParams,
    ) -> Result<Option<SemanticTokensRangeResult>> {
        Ok(self
            .query_within(
                &params.text_document.uri,
                params.range,
                |a, file, within, enc, _| features::tokens::tokens(a, file, Some(within), enc),
            )
            .await?
            .map(SemanticTokensRangeResult::Tokens))
    }

    async fn code_action(&self, params: CodeActionParams) -> Result<Option<CodeActionResponse>> {
        let uri = params.text_document.uri.clone();
        let range = params.range;
        self.query_within(&uri, range, move |a, file, within, enc, _| {
            features::actions::code_actions(a, file, within, &params, enc)
        })
        .await
    }

    async fn formatting(&self, params: DocumentFormattingParams) -> Result<Option<Vec<TextEdit>>> {
        let text = {
            let state = self.state();
            match state.docs.get(&params.text_document.uri) {
                Some(d) => d.text.clone(),
                None => return Ok(None),
            }
        };
        let encoding = self.state().encoding;
        let edits = self
            .workers
            .run(move || features::formatting::edits(&text, encoding))
            .await
            .map_err(|_| Error::internal_error())?;
        Ok(edits)
    }

    async fn inlay_hint(&self, params: InlayHintParams) -> Result<Option<Vec<InlayHint>>> {
        self.query_within(
            &params.text_document.uri,
            params.range,
            |a, file, within, enc, settings| {
                if settings.inlay_hints {
                    features::inlay::hints(a, file, within, enc)
                } else {
                    Vec::new()
                }
            },
        )
        .await
    }
}
