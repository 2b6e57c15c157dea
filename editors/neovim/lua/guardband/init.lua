-- guardband for Neovim (0.7 and later): the `guard` file type for *.guard
-- and the guardband language server, one client per workspace root (the
-- nearest folder holding guardband.toml).
--
--   require('guardband').setup({ cmd = { 'guardband', 'lsp' } })

local M = {}

M.config = {
  cmd = { 'guardband', 'lsp' },
  debounce_ms = 150,
  inlay_hints = true,
  -- The folder of this repository's tree-sitter grammar
  -- (editors/tree-sitter-guard): with nvim-treesitter installed it is
  -- registered as `guard` (then `:TSInstall guard`), and buffers use it.
  tree_sitter = nil,
}

-- Registers the grammar with nvim-treesitter, when both are there.
local function register_grammar(path)
  local ok, parsers = pcall(require, 'nvim-treesitter.parsers')
  if not ok or not path then
    return
  end
  parsers.get_parser_configs().guard = {
    install_info = { url = path, files = { 'src/parser.c', 'src/scanner.c' } },
    filetype = 'guard',
  }
end

local clients = {}

-- The nearest folder at or above `path` holding guardband.toml, else the file's folder.
function M.find_root(path)
  local dir = vim.fn.fnamemodify(path, ':p:h')
  local start = dir
  while dir and dir ~= '' do
    if vim.loop.fs_stat(dir .. '/guardband.toml') then
      return dir
    end
    local parent = vim.fn.fnamemodify(dir, ':h')
    if parent == dir then
      break
    end
    dir = parent
  end
  return start
end

-- Starts (or reuses) the client for the buffer's root and attaches it.
function M.attach(bufnr)
  bufnr = bufnr or vim.api.nvim_get_current_buf()
  local name = vim.api.nvim_buf_get_name(bufnr)
  if name == '' then
    return
  end
  local root = M.find_root(name)
  local id = clients[root]
  if not id or not vim.lsp.get_client_by_id(id) then
    id = vim.lsp.start_client({
      name = 'guardband',
      cmd = M.config.cmd,
      root_dir = root,
      workspace_folders = { { uri = vim.uri_from_fname(root), name = root } },
      init_options = {
        debounceMs = M.config.debounce_ms,
        inlayHints = M.config.inlay_hints,
      },
    })
    if not id then
      vim.notify('guardband: cannot start ' .. table.concat(M.config.cmd, ' '), vim.log.levels.ERROR)
      return
    end
    clients[root] = id
  end
  vim.lsp.buf_attach_client(bufnr, id)
end

function M.setup(opts)
  M.config = vim.tbl_deep_extend('force', M.config, opts or {})
  register_grammar(M.config.tree_sitter)
  local group = vim.api.nvim_create_augroup('guardband', { clear = true })
  vim.api.nvim_create_autocmd({ 'BufRead', 'BufNewFile' }, {
    group = group,
    pattern = '*.guard',
    callback = function(args)
      vim.bo[args.buf].filetype = 'guard'
    end,
  })
  vim.api.nvim_create_autocmd('FileType', {
    group = group,
    pattern = 'guard',
    callback = function(args)
      vim.bo[args.buf].commentstring = '// %s'
      if M.config.tree_sitter and vim.treesitter and vim.treesitter.start then
        -- Highlighting from the grammar once its parser is installed.
        pcall(vim.treesitter.start, args.buf, 'guard')
      end
      M.attach(args.buf)
    end,
  })
end

return M
