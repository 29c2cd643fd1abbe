#!/usr/bin/env bash
# Sets up the real editor (browser-served VS Code, see shared/tools/editor-host/README.md) for the
# end-to-end test, into a cache folder outside the repository.
# Usage: test/e2e/setup-editor.sh [DIR]     DIR defaults to ${POISE_EDITOR_HOST:-/tmp/poise-editor-host}
# Skips the work when DIR already holds a finished setup (start.sh, install-extension.sh, playwright-core).
set -euo pipefail
repo=$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)
dir=${1:-${POISE_EDITOR_HOST:-/tmp/poise-editor-host}}
setup=$repo/../shared/tools/editor-host/setup.sh
if [ -x "$dir/start.sh" ] && [ -x "$dir/install-extension.sh" ] \
   && [ -f "$dir/node_modules/playwright-core/index.mjs" ] \
   && [ -f "$dir/node_modules/code-server/out/node/entry.js" ] && command -v chromium >/dev/null; then
  echo "editor host already set up in $dir"
  exit 0
fi
[ -f "$setup" ] || { echo "setup-editor: $setup not found" >&2; exit 1; }
case "$(cd "$(dirname "$dir")" 2>/dev/null && pwd)/" in
  "$repo"/*) echo "setup-editor: $dir is inside the repository; give a folder outside it" >&2; exit 1 ;;
esac
echo "setting up the editor host in $dir (2-4 minutes)"
bash "$setup" "$dir"
