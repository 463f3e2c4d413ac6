// What yoke_stream_bench prints for its churn section: what the section does, then one
// Markdown row per run (bonus 0, each bonus, bonus 0 again) of each setting as it finishes.
#pragma once

#include <iosfwd>
#include <vector>

#include "tools/bench/churn_runner.h"

namespace yoke::bench {

void print_churn_preamble(std::ostream& out, const std::vector<ChurnBonus>& bonuses);

void print_churn_rows(std::ostream& out, const ChurnResult& result);

}  // namespace yoke::bench
