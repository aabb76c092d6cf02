-- Headless Neovim (0.7, Debian) as a real LSP client of the Offload Ledger server.
-- Usage: SERVER=server/dist/lsp.js FILES=a.c:b.c HOVERS="1:120:8" OUT=out.txt \
--          nvim --headless -u NONE -S tests/e2e/nvim/lsp-check.lua
-- For each file it waits for the server's diagnostics, asks for hovers at the given
-- (file index : 0-based line : 0-based column) positions and for the code actions of every
-- diagnostic, and writes one line per fact to OUT, which tests/e2e/neovim.test.ts reads.
local server = os.getenv('SERVER')
local files = vim.split(os.getenv('FILES') or '', ':', { plain = true })
local hovers = vim.split(os.getenv('HOVERS') or '', ',', { plain = true, trimempty = true })
local outp = os.getenv('OUT') or '/dev/stdout'
local out = assert(io.open(outp, 'w'))
local function log(...) out:write(table.concat({ ... }, ' '), '\n'); out:flush() end
local function finish(ok) log(ok and 'RESULT: PASS' or 'RESULT: FAIL'); out:close(); vim.cmd(ok and 'qa!' or 'cq') end

local diags_by_uri, inited = {}, false
local client_id = vim.lsp.start_client({
  name = 'offload-ledger',
  cmd = { 'node', server, '--stdio' },
  root_dir = vim.fn.fnamemodify(files[1], ':h'),
  on_init = function() inited = true end,
  handlers = {
    ['textDocument/publishDiagnostics'] = function(err, result, ctx, config)
      diags_by_uri[result.uri] = result.diagnostics
      return vim.lsp.diagnostic.on_publish_diagnostics(err, result, ctx, config)
    end,
  },
})
if not client_id then log('start_client failed'); return finish(false) end
if not vim.wait(15000, function() return inited end, 50) then log('initialize timed out'); return finish(false) end
log('INIT hoverProvider=' .. tostring(vim.lsp.get_client_by_id(client_id).server_capabilities.hoverProvider))

local buffers = {}
for i, file in ipairs(files) do
  vim.cmd('edit ' .. vim.fn.fnameescape(file))
  local bufnr = vim.api.nvim_get_current_buf()
  vim.bo[bufnr].filetype = 'c'
  vim.lsp.buf_attach_client(bufnr, client_id)
  local uri = vim.uri_from_bufnr(bufnr)
  buffers[i] = { bufnr = bufnr, uri = uri }
  if not vim.wait(60000, function() return diags_by_uri[uri] ~= nil end, 50) then log('no diagnostics for', file); return finish(false) end
  for _, d in ipairs(diags_by_uri[uri]) do
    log(string.format('DIAG %d %d %s %s', i, d.range.start.line + 1, tostring(d.code), d.codeDescription and d.codeDescription.href or '-'))
  end
  -- Code actions of each diagnostic, as an editor asks for them (context = that diagnostic).
  for _, d in ipairs(diags_by_uri[uri]) do
    local params = { textDocument = { uri = uri }, range = d.range, context = { diagnostics = { d } } }
    local resp = vim.lsp.buf_request_sync(bufnr, 'textDocument/codeAction', params, 30000)
    for _, r in pairs(resp or {}) do
      for _, a in ipairs(r.result or {}) do
        local n = 0
        for _, edits in pairs((a.edit or {}).changes or {}) do n = n + #edits end
        log(string.format('ACTION %d %d %s | %s | edits=%d', i, d.range.start.line + 1, tostring(d.code), a.title, n))
      end
    end
  end
end

for _, h in ipairs(hovers) do
  local fi, line, col = h:match('(%d+):(%d+):(%d+)')
  local b = buffers[tonumber(fi)]
  local params = { textDocument = { uri = b.uri }, position = { line = tonumber(line), character = tonumber(col) } }
  local resp = vim.lsp.buf_request_sync(b.bufnr, 'textDocument/hover', params, 30000)
  local text = 'nil'
  for _, r in pairs(resp or {}) do
    if r.result and r.result.contents then text = r.result.contents.value or vim.inspect(r.result.contents) end
  end
  log(string.format('HOVER %s %s', h, (text:gsub('\n', ' \\n '))))
end

vim.lsp.stop_client(client_id)
vim.wait(3000, function() return vim.lsp.get_client_by_id(client_id) == nil end, 50)
finish(true)
