// The names the Prometheus text format (version 0.0.4) accepts. They are checked when a metric
// is registered: a bad name is a programmer error, better caught at startup than by a scraper
// that rejects the whole page.
#pragma once

#include <map>
#include <string>
#include <string_view>

namespace yoke::daemon::metrics {

// A series' labels, name to value. A map, so that a label set has one spelling whatever order
// the caller lists it in, and renders in name order.
using Labels = std::map<std::string, std::string>;

// [a-zA-Z_:][a-zA-Z0-9_:]*
bool is_metric_name(std::string_view name);
// [a-zA-Z_][a-zA-Z0-9_]*, and not starting with "__" (reserved for Prometheus itself).
bool is_label_name(std::string_view name);

// Throw std::invalid_argument naming the bad name.
void require_metric_name(std::string_view name);
void require_label_names(std::string_view metric, const Labels& labels);

}  // namespace yoke::daemon::metrics
