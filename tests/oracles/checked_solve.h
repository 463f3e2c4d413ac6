// Runs yoke's solver on a test graph and checks the result against an outside oracle.
//
// result_is_sound() and certificate_holds() check what needs no oracle; same_optimum() compares
// the optimum with an oracle's. expect_optimal() runs all three, reports every problem at once
// (a wrong optimum reads differently from a wrong certificate) and writes the graph to
// /tmp/yoke-oracle-failures/ as a reproducer.
#pragma once

#include <functional>
#include <string>

#include <gtest/gtest.h>

#include "yoke/graph.h"
#include "yoke/pool.h"
#include "yoke/solve.h"
#include "oracle_answer.h"

namespace yoke::oracle {

using Oracle = std::function<Answer(const Graph&, Mode)>;

// The matching is a matching of the graph; weight, pairs and status agree with it.
testing::AssertionResult result_is_sound(const Graph& graph, Mode mode, const SolveResult& r);
// yoke::check_certificate accepts the certificate, and its dual objective equals the primal.
testing::AssertionResult certificate_holds(const Graph& graph, const SolveResult& r);
// solve() followed by both checks above.
testing::AssertionResult solve_checked(const Graph& graph, Mode mode, SolveResult& out);

// In perfect mode without a perfect matching, yoke's evidence (a maximum-cardinality matching
// of maximum weight, solve.h) is compared with the oracle's max-cardinality answer.
testing::AssertionResult same_optimum(const Graph& graph, Mode mode, const SolveResult& result,
                                      const Oracle& oracle);

// A pool's commit with its exported certificate, in the form the checks above take.
SolveResult as_solve_result(const CommitResult& result, const PoolExport& exported);

// `label` names the case (oracle, family, size, seed); it becomes the reproducer's file name.
// Returns yoke's result for further checks.
SolveResult expect_optimal(const Graph& graph, Mode mode, const Oracle& oracle,
                           const std::string& label);

// Writes "U V W" lines (dense ids) with the label and mode as comments; returns the path.
std::string write_reproducer(const Graph& graph, Mode mode, const std::string& label);

}  // namespace yoke::oracle
