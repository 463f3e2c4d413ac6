#include "checked_solve.h"

#include <cctype>
#include <filesystem>
#include <fstream>

#include "yoke/certificate.h"
#include "tools/formats/edge_list_writer.h"

namespace yoke::oracle {
namespace {

std::string to_string(Int128 value) {
  if (value == 0) return "0";
  const bool negative = value < 0;
  std::string digits;
  while (value != 0) {
    const int digit = static_cast<int>(value % 10);
    digits.insert(digits.begin(), static_cast<char>('0' + (negative ? -digit : digit)));
    value /= 10;
  }
  return negative ? "-" + digits : digits;
}

// The matching is read from `mate` alone: symmetric, along edges, summed from the graph.
testing::AssertionResult matching_is_sound(const Graph& graph, const SolveResult& r) {
  const std::size_t n = graph.vertex_count();
  if (r.mate.size() != n) {
    return testing::AssertionFailure() << "mate has " << r.mate.size() << " entries for " << n
                                       << " vertices";
  }
  Weight weight = 0;
  std::size_t pairs = 0;
  for (Vertex v = 0; v < n; ++v) {
    const Vertex m = r.mate[v];
    if (m == kNoVertex) continue;
    if (m >= n || m == v || r.mate[m] != v) {
      return testing::AssertionFailure() << "mate is not symmetric at vertex " << v;
    }
    if (v > m) continue;
    bool found = false;
    for (const Incidence& inc : graph.incident(v)) {
      if (inc.other != m) continue;
      weight += graph.edge(inc.edge).w;
      found = true;
      break;
    }
    if (!found) return testing::AssertionFailure() << "matched pair " << v << "-" << m
                                                   << " is not an edge";
    ++pairs;
  }
  if (pairs != r.pairs || weight != r.weight) {
    return testing::AssertionFailure() << "reported weight " << r.weight << " pairs " << r.pairs
                                       << ", but the matching has weight " << weight
                                       << " pairs " << pairs;
  }
  return testing::AssertionSuccess();
}

}  // namespace

testing::AssertionResult result_is_sound(const Graph& graph, Mode mode, const SolveResult& r) {
  if (auto sound = matching_is_sound(graph, r); !sound) return sound;
  const bool perfect_found = 2 * r.pairs == graph.vertex_count();
  if (r.status == SolveStatus::no_perfect_matching && (mode != Mode::perfect || perfect_found)) {
    return testing::AssertionFailure() << "status no_perfect_matching in mode "
                                       << mode_name(mode) << " with " << r.pairs << " pairs";
  }
  if (mode == Mode::perfect && r.status == SolveStatus::optimal && !perfect_found) {
    return testing::AssertionFailure() << "perfect mode reports optimal with " << r.pairs
                                       << " pairs on " << graph.vertex_count() << " vertices";
  }
  return testing::AssertionSuccess();
}

testing::AssertionResult certificate_holds(const Graph& graph, const SolveResult& r) {
  // Without a perfect matching the certificate must prove the shortfall: it certifies the
  // returned maximum-cardinality matching (solve.h).
  const char* what = r.status == SolveStatus::no_perfect_matching
                         ? "certificate of the no_perfect_matching evidence"
                         : "certificate";
  const Certificate& cert = r.certificate;
  if (cert.mate != r.mate) return testing::AssertionFailure() << what << ": mate differs";
  // yoke::check_certificate (engine/include/yoke/certificate.h): the engine's own referee.
  const CheckResult check = check_certificate(graph, cert);
  if (!check.ok) return testing::AssertionFailure() << what << " rejected: " << check.failure;
  // The checker proves w(M) = dual objective; recompute the primal side here as well.
  const Int128 primal2 =
      2 * (Int128{r.weight} + Int128{cert.weight_offset} * static_cast<Int128>(r.pairs));
  if (check.dual_objective2 != primal2) {
    return testing::AssertionFailure() << what << ": dual objective (doubled) "
                                       << to_string(check.dual_objective2)
                                       << " != doubled primal " << to_string(primal2);
  }
  return testing::AssertionSuccess();
}

testing::AssertionResult solve_checked(const Graph& graph, Mode mode, SolveResult& out) {
  try {
    out = solve(graph, mode);
  } catch (const std::exception& error) {
    return testing::AssertionFailure() << "solve threw: " << error.what();
  }
  if (auto sound = result_is_sound(graph, mode, out); !sound) return sound;
  return certificate_holds(graph, out);
}

testing::AssertionResult same_optimum(const Graph& graph, Mode mode, const SolveResult& result,
                                      const Oracle& oracle) {
  const Answer expected = oracle(graph, mode);
  if (mode == Mode::perfect) {
    const bool yoke_found = result.status == SolveStatus::optimal;
    if (yoke_found != expected.feasible) {
      return testing::AssertionFailure()
             << "perfect matching exists: yoke says " << yoke_found << ", oracle says "
             << expected.feasible;
    }
    if (!yoke_found) {
      // The shortfall evidence must be a maximum-cardinality matching of maximum weight.
      const Answer fallback = oracle(graph, Mode::max_cardinality);
      if (fallback.pairs != result.pairs || fallback.weight != result.weight) {
        return testing::AssertionFailure()
               << "no perfect matching; yoke's evidence has pairs " << result.pairs
               << " weight " << result.weight << ", the oracle's max-cardinality optimum pairs "
               << fallback.pairs << " weight " << fallback.weight;
      }
      return testing::AssertionSuccess();
    }
  }
  const bool pairs_matter = mode != Mode::max_weight;  // ties make max-weight pairs ambiguous
  if (expected.weight != result.weight || (pairs_matter && expected.pairs != result.pairs)) {
    return testing::AssertionFailure() << mode_name(mode) << ": yoke weight " << result.weight
                                       << " pairs " << result.pairs << ", oracle weight "
                                       << expected.weight << " pairs " << expected.pairs;
  }
  return testing::AssertionSuccess();
}

SolveResult expect_optimal(const Graph& graph, Mode mode, const Oracle& oracle,
                           const std::string& label) {
  SolveResult result;
  std::string problems;
  try {
    result = solve(graph, mode);
  } catch (const std::exception& error) {
    problems = std::string("\n  solve threw: ") + error.what();
  }
  if (problems.empty()) {
    // All three checks run, so a report tells a wrong optimum from a wrong certificate.
    const testing::AssertionResult checks[] = {result_is_sound(graph, mode, result),
                                               same_optimum(graph, mode, result, oracle),
                                               certificate_holds(graph, result)};
    for (const auto& check : checks) {
      if (!check) problems += std::string("\n  ") + check.message();
    }
  }
  if (!problems.empty()) {
    ADD_FAILURE() << label << " (" << mode_name(mode) << "):" << problems
                  << "\n  reproducer: " << write_reproducer(graph, mode, label);
  }
  return result;
}

SolveResult as_solve_result(const CommitResult& result, const PoolExport& exported) {
  SolveResult r;
  r.status = result.status;
  r.weight = result.weight;
  r.pairs = result.pairs;
  r.mate = exported.certificate.mate;
  r.certificate = exported.certificate;
  return r;
}

std::string write_reproducer(const Graph& graph, Mode mode, const std::string& label) {
  std::string name;
  for (char c : label) name += std::isalnum(static_cast<unsigned char>(c)) ? c : '_';
  const std::filesystem::path dir = "/tmp/yoke-oracle-failures";
  std::error_code ignored;
  std::filesystem::create_directories(dir, ignored);
  const std::filesystem::path path = dir / (name + "_" + mode_name(mode) + ".txt");
  std::ofstream out(path);
  out << "# " << label << "\n# mode " << mode_name(mode) << "\n# vertices "
      << graph.vertex_count() << " (dense ids; vertices absent below are isolated)\n";
  formats::write_edge_list(out, graph.edges());
  return path.string();
}

}  // namespace yoke::oracle
