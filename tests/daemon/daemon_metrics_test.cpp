// DaemonMetrics' batch counters: found in the registry once per pool and outcome and kept, so
// they must appear on the page as the registry would make them (no series before its first
// batch) and go with a retired pool (no count carried into the pool made again).
#include "daemon/server/daemon_metrics.h"

#include <gtest/gtest.h>

#include <chrono>
#include <string>

#include "daemon/service/wire_types.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

v1::Ack accepted_ack(const std::string& pool, bool duplicate) {
  return accepted(batch_ack("client", 1, pool), 1, duplicate);
}

// The page's line of the series, or "" when it is not on the page.
std::string line_of(const std::string& page, const std::string& series) {
  const std::size_t at = page.find(series + " ");
  if (at == std::string::npos) return "";
  return page.substr(at, page.find('\n', at) - at);
}

TEST(DaemonMetrics, BatchCountersComeOnFirstUseAndGoWithARetiredPool) {
  testing::ServiceHarness harness;
  DaemonMetrics metrics;
  const auto page = [&] { return metrics.render(harness.service(), std::chrono::seconds(1)); };
  const std::string harbour = R"(yoke_batches_total{outcome="accepted",pool="harbour"})";
  const std::string harbour_again = R"(yoke_batches_total{outcome="duplicate",pool="harbour"})";
  const std::string quay = R"(yoke_batches_total{outcome="accepted",pool="quay"})";

  metrics.acknowledged(accepted_ack("harbour", false));
  metrics.acknowledged(accepted_ack("harbour", false));
  metrics.acknowledged(accepted_ack("quay", false));
  EXPECT_EQ(line_of(page(), harbour), harbour + " 2");
  EXPECT_EQ(line_of(page(), quay), quay + " 1");
  EXPECT_EQ(line_of(page(), harbour_again), "");  // no duplicate yet: no series of 0

  metrics.acknowledged(accepted_ack("harbour", true));
  EXPECT_EQ(line_of(page(), harbour_again), harbour_again + " 1");

  metrics.pool_retired("harbour");
  EXPECT_EQ(line_of(page(), harbour), "");
  EXPECT_EQ(line_of(page(), harbour_again), "");
  EXPECT_EQ(line_of(page(), quay), quay + " 1");

  // The name used again: counted from nothing, in a series of its own.
  metrics.acknowledged(accepted_ack("harbour", false));
  EXPECT_EQ(line_of(page(), harbour), harbour + " 1");
  EXPECT_EQ(line_of(page(), harbour_again), "");
}

}  // namespace
}  // namespace yoke::daemon
