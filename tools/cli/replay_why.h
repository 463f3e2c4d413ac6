// The postmortem questions of `yoke replay`: `--history V` (the history of V over the replay,
// tools/postmortem/vertex_history.h) and `--explain V` (why V has the pair it has in the state
// where the replay stops, explanation_text.h; `--until SEQ` picks that state). Either runs the
// postmortem library's replay loop with a history observer. With either, the replay prints
// these answers instead of its commit lines, as text or, with --json, one JSON object per
// answer and line. Works on an event script (points are commit numbers) and on a yoked data or
// journal directory (points are the pool's seq numbers; --from starts at a snapshot).
#pragma once

#include <CLI/CLI.hpp>

#include "replay_command.h"

namespace yoke::cli {

// Adds --history, --explain, --alternatives and --json to the replay command and their part of
// its help footer (call after the footer is set).
void add_why_options(CLI::App& command, ReplayOptions& options);

// Whether the invocation asks a postmortem question (--history or --explain), or names --json.
bool wants_why(const ReplayOptions& options);

// Runs the replay for the questions and prints the answers. Throws CliError as run_replay does,
// and for --diffs, --stats, --verify or --report together with a question (or --json alone).
int run_why_replay(const ReplayOptions& options);

}  // namespace yoke::cli
