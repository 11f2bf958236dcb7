#!/bin/sh
# A real client: Debian's neovim (0.7 in Debian 12), headless, with its
# built-in LSP client, drives `knowable lsp` through nvim_client.lua.
# Exits 77 (skipped) when nvim is not installed.
knowable=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
command -v nvim >/dev/null 2>&1 || { echo "nvim is not installed: skipped"; exit 77; }
here=$(cd "$(dirname "$0")" && pwd)
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
# neovim keeps its state under XDG folders: keep them out of the home folder.
export XDG_CONFIG_HOME="$tmp/config" XDG_DATA_HOME="$tmp/data" XDG_STATE_HOME="$tmp/state" XDG_CACHE_HOME="$tmp/cache"
export KNOWABLE="$knowable" LSP_ROOT="$here" NVIM_LOG_FILE="$tmp/nvim.log"
timeout 90 nvim --headless -u NONE -i NONE -n -c "luafile $here/nvim_client.lua" </dev/null
rc=$?
if [ "$rc" != 0 ]; then
    echo "nvim exited with $rc"
    cat "$tmp/nvim.log" 2>/dev/null | tail -n 20
fi
exit "$rc"
