#include "commit_verifier.h"

#include <algorithm>

#include "certified_matching.h"
#include "yoke/certificate.h"

namespace yoke::postmortem {
namespace {

std::string pair_text(const MatchedPair& pair) {
  return "pair " + std::to_string(pair.a) + " " + std::to_string(pair.b);
}

}  // namespace

void CommitVerifier::started(const Pool& pool, std::uint64_t, bool from_snapshot) {
  if (!from_snapshot) return;
  for (const MatchedPair& pair : pool.matching()) matched_.insert({pair.a, pair.b});
}

bool CommitVerifier::committed(const Pool& pool, const CommitStep& step) {
  if (const auto problem = check(pool, step.result)) {
    failure_ = "commit " + std::to_string(step.index) + ": certificate check failed: " + *problem;
    return false;
  }
  return true;
}

std::optional<std::string> CommitVerifier::check(const Pool& pool, const CommitResult& result) {
  if (auto problem = apply_diff(result.diff)) return problem;
  const PoolExport exported = pool.export_certified();
  const CheckResult verdict = check_certificate(exported.graph, exported.certificate);
  if (!verdict.ok) return verdict.failure;

  const CertifiedMatching certified = certified_matching(exported);
  if (certified.pairs.size() != result.pairs) {
    return "the certificate's matching has " + std::to_string(certified.pairs.size()) +
           " pairs, the commit reported " + std::to_string(result.pairs);
  }
  if (certified.weight != result.weight) {
    return "the certificate's matching weighs " + int128_text(certified.weight) +
           ", the commit reported " + std::to_string(result.weight);
  }
  if (!std::equal(certified.pairs.begin(), certified.pairs.end(), matched_.begin(),
                  matched_.end())) {
    return std::string("the certificate's matching differs from the one the diffs add up to");
  }
  return std::nullopt;
}

std::optional<std::string> CommitVerifier::apply_diff(const MatchingDiff& diff) {
  for (const MatchedPair& pair : diff.removed) {
    if (matched_.erase({pair.a, pair.b}) == 0) {
      return "the diff removes " + pair_text(pair) + ", which was not matched";
    }
  }
  for (const MatchedPair& pair : diff.added) {
    if (!matched_.insert({pair.a, pair.b}).second) {
      return "the diff adds " + pair_text(pair) + ", which was already matched";
    }
  }
  return std::nullopt;
}

}  // namespace yoke::postmortem
