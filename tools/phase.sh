# Sourced by the build and test scripts: `phase NAME COMMAND...` runs COMMAND and reports how
# long it took, on stdout and, when YOKE_PHASE_LOG names a file, as a line "NAME SECONDS" there
# (.ci/run prints that file as a table at the end).
phase() {
  local name="$1" start=$SECONDS
  shift
  "$@"
  local took=$((SECONDS - start))
  echo "phase: ${name}: ${took} s"
  if [[ -n "${YOKE_PHASE_LOG:-}" ]]; then echo "${name}|${took}" >> "$YOKE_PHASE_LOG"; fi
}
