// Runs the built `yoke` binary the way a user would, for the end-to-end tests.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "tests/support/temp_dir.h"

namespace yoke::cli::testing {

using TempDir = test_support::TempDir;

struct RunResult {
  int exit_code = -1;  // -1 if yoke did not exit normally
  std::string out;
  std::string err;
};

// Runs `yoke args...` with stdin from `stdin_text`; stdout and stderr are captured through
// files in `dir`.
RunResult run_yoke(const TempDir& dir, const std::vector<std::string>& args,
                   const std::string& stdin_text = "");

}  // namespace yoke::cli::testing
