// What the tail section of yoke_stream_bench prints: what it runs, then per setting a Markdown
// table with one row per action kind (repair time, vertices touched, touched per pair changed,
// wasted repairs) and the ratio of each kind's p99 to LEMON's from-scratch solve.
#pragma once

#include <iosfwd>

#include "tools/bench/tail_runner.h"

namespace yoke::bench {

void print_tail_preamble(std::ostream& out, std::size_t lemon_samples);

void print_tail(std::ostream& out, const TailResult& result);

}  // namespace yoke::bench
