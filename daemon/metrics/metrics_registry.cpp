#include "metrics_registry.h"

#include <stdexcept>
#include <variant>

#include "daemon/metrics/exposition_text.h"

namespace yoke::daemon::metrics {

struct Registry::Family {
  std::string name;
  std::string help;
  MetricType type;
  std::vector<double> bounds;  // histograms only
  Labels first_labels;         // every series of the family has these label names
  // std::map nodes never move, so references to the values stay valid as series are added.
  std::map<Labels, std::variant<Counter, Gauge, Histogram>> series;
};

namespace {

[[noreturn]] void refuse(std::string_view name, std::string_view why) {
  throw std::invalid_argument("metrics: " + std::string(name) + ": " + std::string(why));
}

bool same_label_names(const Labels& a, const Labels& b) {
  if (a.size() != b.size()) return false;
  for (auto i = a.begin(), j = b.begin(); i != a.end(); ++i, ++j) {
    if (i->first != j->first) return false;
  }
  return true;
}

std::vector<std::string> sample_names(std::string_view name, bool histogram) {
  if (!histogram) return {std::string(name)};
  const std::string base(name);
  return {base, base + "_bucket", base + "_sum", base + "_count"};
}

// One sample line: NAME{labels,le="..."} VALUE. `le` is empty for all but histogram buckets.
void append_sample(std::string& out, std::string_view name, const Labels& labels,
                   std::string_view le, auto value) {
  out += name;
  if (!labels.empty() || !le.empty()) {
    char separator = '{';
    for (const auto& [label, text] : labels) {
      out += separator;
      out += label;
      out += "=\"";
      append_label_value(out, text);
      out += '"';
      separator = ',';
    }
    if (!le.empty()) {
      out += separator;
      out += "le=\"";
      out += le;
      out += '"';
    }
    out += '}';
  }
  out += ' ';
  append_number(out, value);
  out += '\n';
}

void append_histogram(std::string& out, const std::string& name, const Labels& labels,
                      const Histogram& histogram) {
  const std::string bucket = name + "_bucket";
  std::uint64_t cumulative = 0;
  std::string le;
  for (std::size_t i = 0; i < histogram.bounds().size(); ++i) {
    cumulative += histogram.bucket_counts()[i];
    le.clear();
    append_number(le, histogram.bounds()[i]);
    append_sample(out, bucket, labels, le, cumulative);
  }
  append_sample(out, bucket, labels, "+Inf", histogram.count());
  append_sample(out, name + "_sum", labels, "", histogram.sum());
  append_sample(out, name + "_count", labels, "", histogram.count());
}

}  // namespace

Registry::Registry() = default;
Registry::~Registry() = default;

Counter& Registry::counter(std::string_view name, std::string_view help, const Labels& labels) {
  if (!name.ends_with("_total")) refuse(name, "a counter's name ends in _total");
  return series<Counter>(name, help, MetricType::counter, {}, labels);
}

Gauge& Registry::gauge(std::string_view name, std::string_view help, const Labels& labels) {
  return series<Gauge>(name, help, MetricType::gauge, {}, labels);
}

Histogram& Registry::histogram(std::string_view name, std::string_view help,
                               const std::vector<double>& bounds, const Labels& labels) {
  if (labels.contains("le")) refuse(name, "\"le\" is the bucket label of a histogram");
  if (const char* why = histogram_bounds_error(bounds)) refuse(name, why);
  return series<Histogram>(name, help, MetricType::histogram, bounds, labels);
}

template <typename Value>
Value& Registry::series(std::string_view name, std::string_view help, MetricType type,
                        const std::vector<double>& bounds, const Labels& labels) {
  Family& f = family(name, help, type, bounds, labels);
  auto found = f.series.find(labels);
  if (found == f.series.end()) {
    if constexpr (std::is_same_v<Value, Histogram>) {
      found = f.series.emplace(labels, Histogram(f.bounds)).first;
    } else {
      found = f.series.emplace(labels, Value{}).first;
    }
  }
  return std::get<Value>(found->second);
}

// Finds the family or makes it; every check happens before anything changes, so a refused
// registration leaves the registry as it was.
Registry::Family& Registry::family(std::string_view name, std::string_view help, MetricType type,
                                   const std::vector<double>& bounds, const Labels& labels) {
  require_metric_name(name);
  require_label_names(name, labels);
  if (const auto found = by_name_.find(name); found != by_name_.end()) {
    Family& f = *found->second;
    if (f.type != type) refuse(name, std::string("already registered as a ") + type_name(f.type));
    if (f.help != help) refuse(name, "already registered with another help text");
    if (f.bounds != bounds) refuse(name, "already registered with other bucket bounds");
    if (!same_label_names(f.first_labels, labels)) {
      refuse(name, "every series of a metric has the same label names");
    }
    return f;
  }
  const std::vector<std::string> names = sample_names(name, type == MetricType::histogram);
  for (const std::string& rendered : names) {
    if (rendered_names_.contains(rendered))
      refuse(name, rendered + " is rendered by another metric");
  }
  auto f = std::make_unique<Family>(
      Family{std::string(name), std::string(help), type, bounds, labels, {}});
  Family& made = *f;
  families_.push_back(std::move(f));
  by_name_.emplace(made.name, &made);
  rendered_names_.insert(names.begin(), names.end());
  return made;
}

std::string Registry::render() const {
  std::string out;
  for (const auto& f : families_) {
    out += "# HELP ";
    out += f->name;
    out += ' ';
    append_help_text(out, f->help);
    out += "\n# TYPE ";
    out += f->name;
    out += ' ';
    out += type_name(f->type);
    out += '\n';
    for (const auto& [labels, value] : f->series) {
      if (const auto* c = std::get_if<Counter>(&value)) {
        append_sample(out, f->name, labels, "", c->value());
      } else if (const auto* g = std::get_if<Gauge>(&value)) {
        if (g->is_integer()) {
          append_sample(out, f->name, labels, "", g->integer());
        } else {
          append_sample(out, f->name, labels, "", g->value());
        }
      } else {
        append_histogram(out, f->name, labels, std::get<Histogram>(value));
      }
    }
  }
  return out;
}

std::size_t Registry::forget_series(std::string_view label, std::string_view value) {
  std::size_t removed = 0;
  for (const std::unique_ptr<Family>& family : families_) {
    removed += std::erase_if(family->series, [&](const auto& entry) {
      const auto found = entry.first.find(std::string(label));
      return found != entry.first.end() && found->second == value;
    });
  }
  return removed;
}

}  // namespace yoke::daemon::metrics
