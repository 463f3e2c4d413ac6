// The registry's page, checked byte for byte against the Prometheus text exposition format
// 0.0.4. The expected pages are written by hand from the format's rules.
#include "daemon/metrics/metrics_registry.h"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdint>
#include <limits>
#include <stdexcept>
#include <string>

namespace yoke::daemon::metrics {
namespace {

TEST(MetricsRegistry, EmptyRegistryRendersNothing) {
  const Registry registry;
  EXPECT_EQ(registry.render(), "");
}

TEST(MetricsRegistry, CounterFamilyWithSeriesSortedByLabels) {
  Registry registry;
  Counter& city = registry.counter("yoke_events_total", "Events applied.", {{"pool", "city"}});
  Counter& airport =
      registry.counter("yoke_events_total", "Events applied.", {{"pool", "airport"}});
  city.add(3);
  airport.add();
  EXPECT_EQ(&registry.counter("yoke_events_total", "Events applied.", {{"pool", "city"}}), &city);
  EXPECT_EQ(city.value(), 3u);
  EXPECT_EQ(registry.render(),
            "# HELP yoke_events_total Events applied.\n"
            "# TYPE yoke_events_total counter\n"
            "yoke_events_total{pool=\"airport\"} 1\n"
            "yoke_events_total{pool=\"city\"} 3\n");
}

TEST(MetricsRegistry, CounterWithoutLabelsAndLargeValue) {
  Registry registry;
  registry.counter("yoke_bytes_total", "Bytes.").add(std::numeric_limits<std::uint64_t>::max());
  EXPECT_EQ(registry.render(),
            "# HELP yoke_bytes_total Bytes.\n"
            "# TYPE yoke_bytes_total counter\n"
            "yoke_bytes_total 18446744073709551615\n");
}

TEST(MetricsRegistry, GaugesIntegerAndReal) {
  Registry registry;
  registry.gauge("g_int", "Integer, exact past 2^53.").set(std::int64_t{9007199254740993});
  registry.gauge("g_small", "An int.").set(-7);
  registry.gauge("g_unsigned", "Clamped.").set(std::numeric_limits<std::uint64_t>::max());
  registry.gauge("g_real", "Shortest form.").set(0.1);
  registry.gauge("g_exp", "Exponent.").set(1e21);
  registry.gauge("g_whole", "A whole double.").set(2.0);
  registry.gauge("g_pinf", "Up.").set(std::numeric_limits<double>::infinity());
  registry.gauge("g_ninf", "Down.").set(-std::numeric_limits<double>::infinity());
  registry.gauge("g_nan", "Not a number.").set(std::nan(""));
  registry.gauge("g_unset", "Never set.");
  EXPECT_EQ(registry.render(),
            "# HELP g_int Integer, exact past 2^53.\n# TYPE g_int gauge\ng_int 9007199254740993\n"
            "# HELP g_small An int.\n# TYPE g_small gauge\ng_small -7\n"
            "# HELP g_unsigned Clamped.\n# TYPE g_unsigned gauge\ng_unsigned 9223372036854775807\n"
            "# HELP g_real Shortest form.\n# TYPE g_real gauge\ng_real 0.1\n"
            "# HELP g_exp Exponent.\n# TYPE g_exp gauge\ng_exp 1e+21\n"
            "# HELP g_whole A whole double.\n# TYPE g_whole gauge\ng_whole 2\n"
            "# HELP g_pinf Up.\n# TYPE g_pinf gauge\ng_pinf +Inf\n"
            "# HELP g_ninf Down.\n# TYPE g_ninf gauge\ng_ninf -Inf\n"
            "# HELP g_nan Not a number.\n# TYPE g_nan gauge\ng_nan NaN\n"
            "# HELP g_unset Never set.\n# TYPE g_unset gauge\ng_unset 0\n");
}

TEST(MetricsRegistry, HistogramBucketsAreCumulative) {
  Registry registry;
  Histogram& h = registry.histogram("yoke_commit_seconds", "Time to repair one commit.",
                                    {0.25, 0.5, 1, 2.5}, {{"pool", "city"}});
  h.observe(0.125);
  h.observe(0.5);  // on a bound: counted in that bound's bucket (le means <=)
  h.observe(0.75);
  h.observe(4);  // past the last bound: +Inf only
  EXPECT_EQ(registry.render(),
            "# HELP yoke_commit_seconds Time to repair one commit.\n"
            "# TYPE yoke_commit_seconds histogram\n"
            "yoke_commit_seconds_bucket{pool=\"city\",le=\"0.25\"} 1\n"
            "yoke_commit_seconds_bucket{pool=\"city\",le=\"0.5\"} 2\n"
            "yoke_commit_seconds_bucket{pool=\"city\",le=\"1\"} 3\n"
            "yoke_commit_seconds_bucket{pool=\"city\",le=\"2.5\"} 3\n"
            "yoke_commit_seconds_bucket{pool=\"city\",le=\"+Inf\"} 4\n"
            "yoke_commit_seconds_sum{pool=\"city\"} 5.375\n"
            "yoke_commit_seconds_count{pool=\"city\"} 4\n");
}

TEST(MetricsRegistry, HistogramWithoutLabelsOrObservations) {
  Registry registry;
  registry.histogram("h", "Empty.", {-1, 1e-3});
  registry.histogram("only_inf", "No bounds.", {}).observe(-2);
  EXPECT_EQ(registry.render(),
            "# HELP h Empty.\n"
            "# TYPE h histogram\n"
            "h_bucket{le=\"-1\"} 0\n"
            "h_bucket{le=\"0.001\"} 0\n"
            "h_bucket{le=\"+Inf\"} 0\n"
            "h_sum 0\n"
            "h_count 0\n"
            "# HELP only_inf No bounds.\n"
            "# TYPE only_inf histogram\n"
            "only_inf_bucket{le=\"+Inf\"} 1\n"
            "only_inf_sum -2\n"
            "only_inf_count 1\n");
}

TEST(MetricsRegistry, HistogramNanGoesToInfBucket) {
  Registry registry;
  Histogram& h = registry.histogram("h", "With NaN.", {1});
  h.observe(std::nan(""));
  EXPECT_EQ(h.bucket_counts()[0], 0u);
  EXPECT_EQ(h.bucket_counts()[1], 1u);
  EXPECT_EQ(registry.render(),
            "# HELP h With NaN.\n# TYPE h histogram\n"
            "h_bucket{le=\"1\"} 0\nh_bucket{le=\"+Inf\"} 1\nh_sum NaN\nh_count 1\n");
}

TEST(MetricsRegistry, FamiliesInRegistrationOrderLabelsByName) {
  Registry registry;
  registry.gauge("zeta", "Registered first.", {{"zone", "n"}, {"pool", "a"}}).set(1);
  registry.counter("alpha_total", "Registered second.").add(2);
  registry.gauge("zeta", "Registered first.", {{"pool", "a"}, {"zone", "m"}}).set(3);
  EXPECT_EQ(registry.render(),
            "# HELP zeta Registered first.\n"
            "# TYPE zeta gauge\n"
            "zeta{pool=\"a\",zone=\"m\"} 3\n"
            "zeta{pool=\"a\",zone=\"n\"} 1\n"
            "# HELP alpha_total Registered second.\n"
            "# TYPE alpha_total counter\n"
            "alpha_total 2\n");
}

TEST(MetricsRegistry, LabelValuesAndHelpAreEscaped) {
  Registry registry;
  registry.gauge("g", "Line one\nback\\slash \"quoted\"", {{"pool", "a\\b\"c\nd"}}).set(1);
  registry.gauge("g", "Line one\nback\\slash \"quoted\"", {{"pool", "caf\xc3\xa9\xff"}}).set(2);
  EXPECT_EQ(registry.render(),
            "# HELP g Line one\\nback\\\\slash \"quoted\"\n"
            "# TYPE g gauge\n"
            "g{pool=\"a\\\\b\\\"c\\nd\"} 1\n"
            "g{pool=\"caf\xc3\xa9\xef\xbf\xbd\"} 2\n");
}

TEST(MetricsRegistry, BadNamesAreRefused) {
  Registry registry;
  for (const char* name : {"", "9lives", "has-dash", "has space", "caf\xc3\xa9", "a.b"}) {
    EXPECT_THROW(registry.gauge(name, "h"), std::invalid_argument) << name;
  }
  for (const char* label : {"", "__reserved", "9x", "a:b", "a-b"}) {
    EXPECT_THROW(registry.gauge("g", "h", {{label, "v"}}), std::invalid_argument) << label;
  }
  EXPECT_NO_THROW(registry.gauge("_ok:name9", "h", {{"_l9", ""}}));
  EXPECT_NO_THROW(registry.gauge(":colon_first", "h"));
  EXPECT_THROW(registry.counter("yoke_events", "no _total"), std::invalid_argument);
  EXPECT_THROW(registry.histogram("h", "h", {1}, {{"le", "1"}}), std::invalid_argument);
}

TEST(MetricsRegistry, BadBoundsAreRefused) {
  Registry registry;
  const double inf = std::numeric_limits<double>::infinity();
  EXPECT_THROW(registry.histogram("h", "h", {1, 1}), std::invalid_argument);
  EXPECT_THROW(registry.histogram("h", "h", {2, 1}), std::invalid_argument);
  EXPECT_THROW(registry.histogram("h", "h", {1, inf}), std::invalid_argument);
  EXPECT_THROW(registry.histogram("h", "h", {std::nan("")}), std::invalid_argument);
  EXPECT_EQ(registry.render(), "");
}

TEST(MetricsRegistry, ConflictsAreRefusedAndLeaveTheRegistryAlone) {
  Registry registry;
  registry.gauge("g", "Help.", {{"pool", "a"}}).set(1);
  registry.histogram("h", "Help.", {1});
  const std::string before = registry.render();
  EXPECT_THROW(registry.histogram("g", "Help.", {1}), std::invalid_argument);  // another type
  EXPECT_THROW(registry.gauge("g", "Other help.", {{"pool", "a"}}), std::invalid_argument);
  EXPECT_THROW(registry.gauge("g", "Help.", {{"zone", "a"}}), std::invalid_argument);
  EXPECT_THROW(registry.gauge("g", "Help."), std::invalid_argument);           // fewer labels
  EXPECT_THROW(registry.histogram("h", "Help.", {2}), std::invalid_argument);  // other bounds
  EXPECT_THROW(registry.gauge("h_count", "Help."), std::invalid_argument);     // rendered by h
  EXPECT_THROW(registry.gauge("h_bucket", "Help."), std::invalid_argument);
  registry.gauge("x_sum", "Help.");
  EXPECT_THROW(registry.histogram("x", "Help.", {1}), std::invalid_argument);  // x_sum taken
  EXPECT_EQ(registry.render(), before + "# HELP x_sum Help.\n# TYPE x_sum gauge\nx_sum 0\n");
}

}  // namespace
}  // namespace yoke::daemon::metrics
