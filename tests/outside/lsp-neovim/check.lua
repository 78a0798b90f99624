-- Drives Neovim 0.7's built-in LSP client against the Phasewright server: attaches the server
-- to the current buffer, waits for its diagnostics, asks for a hover, and writes what Neovim
-- received as JSON to $PW_OUT. Neovim 0.7 has no vim.lsp.start, so start_client and
-- buf_attach_client are used. Any failure exits with `cquit! 1`.
local out_path = os.getenv('PW_OUT')
local server = os.getenv('PW_SERVER')
local hover_line = tonumber(os.getenv('PW_HOVER_LINE'))
local hover_char = tonumber(os.getenv('PW_HOVER_CHAR'))

local function fail(message)
  local file = io.open(out_path, 'w')
  file:write(vim.fn.json_encode({ error = message }))
  file:close()
  vim.cmd('cquit! 1')
end

vim.bo.filetype = 'phasewright'
local client_id = vim.lsp.start_client({
  name = 'phasewright',
  cmd = { 'node', server, '--stdio' },
  root_dir = vim.fn.getcwd(),
})
if not client_id then
  fail('start_client returned nil')
end
vim.lsp.buf_attach_client(0, client_id)

local got = vim.wait(20000, function()
  return #vim.diagnostic.get(0) > 0
end, 50)
if not got then
  fail('no diagnostics within 20 s')
end

local diagnostics = {}
for _, d in ipairs(vim.diagnostic.get(0)) do
  table.insert(diagnostics, { code = d.code, lnum = d.lnum, col = d.col, severity = d.severity, source = d.source, message = d.message })
end

local params = { textDocument = vim.lsp.util.make_text_document_params(), position = { line = hover_line, character = hover_char } }
local responses, err = vim.lsp.buf_request_sync(0, 'textDocument/hover', params, 10000)
if not responses then
  fail('hover failed: ' .. tostring(err))
end
local hover
for _, response in pairs(responses) do
  if response.result then
    hover = response.result.contents
  end
end

local file = io.open(out_path, 'w')
file:write(vim.fn.json_encode({ diagnostics = diagnostics, hover = hover }))
file:close()
vim.lsp.stop_client(client_id)
vim.cmd('qa!')
