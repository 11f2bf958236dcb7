-- knowable.lua - `knowable lsp` in neovim (0.7 or later, its built-in LSP
-- client, no plugin).  Put this file on your runtimepath (for example in
-- ~/.config/nvim/lua/) and call, in init.lua:
--
--   require('knowable').setup()
--
-- or, with options (the values shown are the defaults):
--
--   require('knowable').setup({
--     cmd = { 'knowable', 'lsp' },                      -- add '--rulebook', F or '--root', D if check needs them
--     pattern = { '*.knowable.yaml', '*/register/*.yaml' }, -- schemas and the registers they include
--   })
--
-- One server serves every buffer, so that an unsaved register is seen by
-- the schemas that include it.  tests/lsp/nvim_client.lua loads this file.
local M = {}

function M.setup(opts)
  opts = opts or {}
  local cmd = opts.cmd or { 'knowable', 'lsp' }
  local pattern = opts.pattern or { '*.knowable.yaml', '*/register/*.yaml' }
  local client_id
  vim.api.nvim_create_autocmd({ 'BufReadPost', 'BufNewFile' }, {
    pattern = pattern,
    callback = function(args)
      if not client_id or not vim.lsp.get_client_by_id(client_id) then
        client_id = vim.lsp.start_client({
          name = 'knowable',
          cmd = cmd,
          root_dir = opts.root_dir or vim.fn.getcwd(),
          handlers = opts.handlers,
        })
      end
      if client_id then
        vim.lsp.buf_attach_client(args.buf, client_id)
      end
    end,
  })
  M.client_id = function()
    return client_id
  end
end

return M
