// The daemon's metrics by name, rendered as a page of the Prometheus text exposition format,
// version 0.0.4 (the body of GET /metrics).
//
// A family is one metric name with one # HELP and one # TYPE line; its series are the label
// sets registered under that name. Families render in the order they were first registered,
// series within a family sorted by their labels (name, then value), labels by name: the same
// state always renders the same bytes.
//
// Single-threaded by design: the daemon registers, updates and renders on its event-loop
// thread, so nothing here locks. Another thread needs the caller's own lock around all of it.
#pragma once

#include <map>
#include <memory>
#include <set>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/metrics/metric_names.h"
#include "daemon/metrics/metric_types.h"

namespace yoke::daemon::metrics {

class Registry {
 public:
  Registry();
  ~Registry();
  // Callers keep references into the registry; it stays where it was made.
  Registry(const Registry&) = delete;
  Registry& operator=(const Registry&) = delete;

  // Each returns the series of that name and labels, created on first use; later calls with
  // the same name and labels return the same object. The reference stays valid for the
  // registry's life. Throws std::invalid_argument (a programmer error) when
  //   - the metric or a label name breaks the format's rules (see metric_names.h);
  //   - the name is taken by a family of another type, or with another help text (or, for a
  //     histogram, other bounds), or one of the names the new family renders is already
  //     rendered by another (a histogram "x" renders x_bucket, x_sum and x_count);
  //   - the label names differ from those of the family's first series;
  //   - a counter's name does not end in "_total" (the name is written as it is rendered);
  //   - a histogram has a label "le", or bounds that are not finite and strictly increasing.
  // Cost: O(log families + log series) string comparisons.
  Counter& counter(std::string_view name, std::string_view help, const Labels& labels = {});
  Gauge& gauge(std::string_view name, std::string_view help, const Labels& labels = {});
  Histogram& histogram(std::string_view name, std::string_view help,
                       const std::vector<double>& bounds, const Labels& labels = {});

  // Removes every series (of any family) that has label `label` with value `value`, e.g. the
  // series of a retired pool, so that names that come and go do not grow the page for ever.
  // References to the removed series become invalid. Families stay, even when empty (their
  // HELP and TYPE lines still render). Returns how many series went. O(total series).
  std::size_t forget_series(std::string_view label, std::string_view value);

  // The whole page; O(total series + buckets).
  std::string render() const;

 private:
  struct Family;
  template <typename Value>
  Value& series(std::string_view name, std::string_view help, MetricType type,
                const std::vector<double>& bounds, const Labels& labels);
  Family& family(std::string_view name, std::string_view help, MetricType type,
                 const std::vector<double>& bounds, const Labels& labels);

  std::vector<std::unique_ptr<Family>> families_;  // registration order, the render order
  std::map<std::string, Family*, std::less<>> by_name_;
  std::set<std::string, std::less<>> rendered_names_;  // every sample name of every family
};

}  // namespace yoke::daemon::metrics
