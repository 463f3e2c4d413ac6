#!/usr/bin/env bash
# The engine's layout rules that the include paths alone cannot enforce (engine/CMakeLists.txt):
# - outside the engine, code reaches it only through its public headers ("yoke/...");
# - inside it, no file climbs out of its folder with "../", which would let the checker see the
#   solver it judges.
# Usage: check_engine_includes.sh REPO_ROOT
set -u
cd "$1" || exit 2
status=0
if grep -rnE '#include "engine/' daemon tools tests --include='*.h' --include='*.cpp'; then
  echo "error: the lines above include engine files by path; use the public \"yoke/...\" headers" >&2
  status=1
fi
if grep -rnE '#include "[^"]*\.\./' engine --include='*.h' --include='*.cpp'; then
  echo "error: the lines above climb out of their folder; the engine's folders are reached" \
       "through their targets' include paths" >&2
  status=1
fi
exit $status
