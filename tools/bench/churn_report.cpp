#include "tools/bench/churn_report.h"

#include <ostream>
#include <string>

#include "tools/bench/number_format.h"

namespace yoke::bench {
namespace {

std::string ratio(double part, double whole, const char* pattern) {
  return whole > 0 ? format(pattern, part / whole) : std::string("n/a");
}

std::string checks(const ChurnResult& result, const ChurnRun& run, bool repeat) {
  if (repeat && !result.repeat_identical) return "DIFFERS from the first bonus-0 run";
  if (!run.never_above_optimum) return "ABOVE OPTIMUM";
  if (!run.certificate_holds) return "certificate FAILS";
  if (!run.certified_weight_equal) return "weight DIFFERS";
  return "ok";
}

}  // namespace

void print_churn_preamble(std::ostream& out, const std::vector<ChurnBonus>& bonuses) {
  std::string asked;
  for (const ChurnBonus& b : bonuses) {
    asked += (asked.empty() ? "" : ", ") + b.text;
  }
  out << "\n## Churn control: the same stream, pools with a bonus for standing pairs\n\n"
      << "churn:    each commit maximises w(M) + bonus x |M and M_before| (Pool's churn_bonus); "
         "weights\n"
      << "          shown exclude the bonus. Bonuses " << asked
      << " (a share is of the stream's largest weight).\n"
      << "          Same stored stream, same order, one pool per bonus in this process; Pool::check "
         "untimed.\n"
      << "          Bonus 0 runs first and again last: time ratios are against the mean of its two "
         "runs,\n"
      << "          so its own two ratios show the noise. time: wall clock summed over the "
         "commits; cpu:\n"
      << "          this thread's CPU time for the same calls (steadier on a shared machine); "
         "p99: of the\n"
      << "          per-commit wall times. The base graph's commit is left out.\n"
      << "changed:  pairs removed + added per commit (CommitResult.diff). broken: removed pairs "
         "whose two\n"
      << "          vertices are both still in the pool after the commit (standing pairs broken).\n"
      << "weight:   after the last commit, and its ratio to bonus 0's (the price of stability); "
         "lowest:\n"
      << "          the smallest ratio after any commit.\n"
      << "checks:   weight <= bonus 0's after every commit; the final export's certificate holds "
         "(bonus\n"
      << "          included) and its matching weighs Pool::weight() without the bonus; both "
         "bonus-0 runs\n"
      << "          agree on every commit's weight and diff size.\n\n"
      << "| setting | bonus | commits | changed mean | changed p99 | broken | broken / commit | "
         "final weight | weight / bonus 0 | lowest | repair time / bonus 0 | repair cpu / bonus 0 | "
         "p99 repair / bonus 0 | checks |\n"
      << "|---|---|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|---|\n"
      << std::flush;
}

void print_churn_rows(std::ostream& out, const ChurnResult& result) {
  const double reference_weight = static_cast<double>(result.reference().final_weight);
  for (std::size_t i = 0; i < result.runs.size(); ++i) {
    const ChurnRun& r = result.runs[i];
    const bool repeat = i + 1 == result.runs.size();
    const double commits = static_cast<double>(r.commits);
    out << "| " << result.setting.name << " | " << r.label << " | " << r.commits << " | "
        << format("%.2f", r.changed.mean) << " | " << format("%.0f", r.changed.p99) << " | "
        << r.broken << " | "
        << (r.commits > 0 ? format("%.2f", static_cast<double>(r.broken) / commits) : "n/a")
        << " | " << r.final_weight << " | "
        << ratio(static_cast<double>(r.final_weight), reference_weight, "%.4f") << " | "
        << format("%.4f", r.lowest_weight_ratio) << " | "
        << ratio(r.repair_seconds, result.reference_seconds(), "%.2f") << " | "
        << ratio(r.repair_cpu_seconds, result.reference_cpu_seconds(), "%.2f") << " | "
        << ratio(r.repair_us.p99, result.reference_p99_us(), "%.2f") << " | "
        << checks(result, r, repeat) << " |\n";
  }
  for (const ChurnRun& r : result.runs) {
    if (!r.failure.empty()) {
      out << "  FAILED CHECK " << result.setting.name << " bonus " << r.label << ": "
          << r.failure << "\n";
    }
  }
  out << std::flush;
}

}  // namespace yoke::bench
