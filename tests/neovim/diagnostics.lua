-- Headless Neovim: open a spec with the guardband module, wait for the
-- server's diagnostics and write them as JSON for tests/neovim.rs.
local rtp = os.getenv('GUARDBAND_RTP')
local bin = os.getenv('GUARDBAND_BIN')
local file = os.getenv('GUARDBAND_FILE')
local out = os.getenv('GUARDBAND_OUT')
vim.opt.runtimepath:prepend(rtp)
require('guardband').setup({ cmd = { bin, 'lsp' }, debounce_ms = 20 })
vim.cmd('edit ' .. vim.fn.fnameescape(file))
local ok = vim.wait(20000, function()
  return #vim.diagnostic.get(0) > 0
end, 50)
local items = {}
for _, d in ipairs(vim.diagnostic.get(0)) do
  local code = d.code
  if code == nil and d.user_data and d.user_data.lsp then
    code = d.user_data.lsp.code
  end
  table.insert(items, {
    lnum = d.lnum,
    col = d.col,
    end_lnum = d.end_lnum,
    end_col = d.end_col,
    severity = d.severity,
    code = code or '',
    message = d.message,
  })
end
local f = io.open(out, 'w')
f:write(vim.fn.json_encode({ ok = ok, filetype = vim.bo.filetype, diagnostics = items }))
f:close()
vim.cmd('qa!')
