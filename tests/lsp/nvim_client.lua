-- nvim_client.lua - neovim's built-in LSP client (0.7: vim.lsp.start_client
-- and vim.lsp.buf_attach_client) drives `knowable lsp`: it opens a schema,
-- receives the diagnostics, edits the buffer and receives the new ones, and
-- follows a go-to-definition into the included register.  Ends nvim with
-- status 0 when every step held, 1 otherwise.
local knowable = os.getenv('KNOWABLE')
local root = os.getenv('LSP_ROOT')
local schema = root .. '/bakery/unsold.knowable.yaml'
local checks = 0

local function say(msg)
  io.stdout:write(msg .. '\n')
end

local function fail(msg)
  say('FAIL: ' .. msg)
  vim.cmd('cquit 1')
end

local function check(cond, msg)
  if not cond then
    fail(msg)
  end
  checks = checks + 1
  say('ok - ' .. msg)
end

-- The diagnostics the client holds for a buffer, by the server's rule id.
local function by_code(bufnr)
  local out = {}
  for _, d in ipairs(vim.diagnostic.get(bufnr)) do
    local code = d.code or (d.user_data and d.user_data.lsp and d.user_data.lsp.code)
    out[#out + 1] = { code = code, lnum = d.lnum, col = d.col, message = d.message }
  end
  return out
end

local function has(list, code, lnum)
  for _, d in ipairs(list) do
    if d.code == code and d.lnum == lnum then
      return true
    end
  end
  return false
end

local function run()
  -- The configuration the README shows (editors/neovim/knowable.lua): an
  -- autocommand attaches every schema and register to one server.
  local published = 0
  local knowable_nvim = dofile(root .. '/../../editors/neovim/knowable.lua')
  knowable_nvim.setup({
    cmd = { knowable, 'lsp' },
    root_dir = root,
    handlers = {
      ['textDocument/publishDiagnostics'] = function(err, result, ctx, config)
        if result and result.uri == vim.uri_from_fname(schema) then
          published = published + 1
        end
        return vim.lsp.diagnostic.on_publish_diagnostics(err, result, ctx, config)
      end,
    },
  })
  vim.cmd('edit ' .. vim.fn.fnameescape(schema))
  local bufnr = vim.api.nvim_get_current_buf()
  local client_id = knowable_nvim.client_id()
  check(client_id ~= nil, 'opening the schema starts `knowable lsp` and attaches the buffer')

  -- 1. The diagnostics of the schema as opened (line 16: oven_temperature
  --    is known at the moment plus the oven log's one minute).
  local ok = vim.wait(20000, function()
    return published >= 1 and #vim.diagnostic.get(bufnr) > 0
  end, 50)
  check(ok, 'diagnostics arrive after the schema is opened')
  local diags = by_code(bufnr)
  check(has(diags, 'after-moment', 15), 'after-moment on line 16 (oven_temperature)')
  check(has(diags, 'after-moment', 23), 'after-moment on line 24 (loaves_sold_first_hour)')
  check(has(diags, 'inherits-late-input', 27), 'inherits-late-input on line 28 (rest_per_loaf)')

  -- 2. Edit the buffer (not saved): the oven temperature is read at the
  --    dough mix; the client sends the change and new diagnostics come.
  local before = published
  vim.api.nvim_buf_set_lines(bufnr, 15, 16, false, { '    known: dough_mixed' })
  ok = vim.wait(20000, function()
    return published > before and not has(by_code(bufnr), 'after-moment', 15)
  end, 50)
  check(ok, 'new diagnostics after the edit')
  diags = by_code(bufnr)
  check(not has(diags, 'after-moment', 15), 'the finding on line 16 is gone')
  check(not has(diags, 'inherits-late-input', 27), 'and so is the one it caused on line 28')
  check(has(diags, 'after-moment', 23), 'the finding on line 24 stays')
  check(vim.bo[bufnr].modified, 'the buffer is still unsaved')

  -- 3. Go to definition of the event on line 24 ("    known: sold_out"):
  --    it is defined in the included register.
  vim.api.nvim_win_set_cursor(0, { 24, 14 })
  vim.lsp.buf.definition()
  ok = vim.wait(20000, function()
    return vim.api.nvim_buf_get_name(0):match('register/ovens%.yaml$') ~= nil
  end, 50)
  check(ok, 'go to definition opens the included register')
  local cursor = vim.api.nvim_win_get_cursor(0)
  check(cursor[1] == 12 and cursor[2] == 2, 'at the key sold_out (line 12, column 3), got ' .. cursor[1] .. ':' .. cursor[2])

  -- 4. The register's buffer was attached by the autocommand: hover over
  --    the event answers with its range relative to the moment.
  check(vim.lsp.buf_is_attached(0, client_id), 'the register is attached to the same server')
  local hover = vim.lsp.buf_request_sync(0, 'textDocument/hover', vim.lsp.util.make_position_params(), 10000)
  local text = ''
  for _, r in pairs(hover or {}) do
    if r.result and r.result.contents then
      text = r.result.contents.value or ''
    end
  end
  check(text:find("after the moment 'baked'", 1, true) ~= nil, 'hover in the register gives the range: ' .. text:gsub('\n', ' '))

  vim.lsp.stop_client(client_id)
  vim.wait(5000, function()
    return vim.lsp.get_client_by_id(client_id) == nil
  end, 50)
  say(checks .. ' checks held')
  vim.cmd('qall!')
end

local okrun, err = pcall(run)
if not okrun then
  fail(tostring(err))
end
