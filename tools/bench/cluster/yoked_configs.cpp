#include "yoked_configs.h"

#include <algorithm>
#include <fstream>
#include <stdexcept>

namespace yoke::bench {
namespace {

std::string quoted_list(const std::vector<std::string>& items) {
  std::string text = "[";
  for (const std::string& item : items) text += (text.size() > 1 ? ", \"" : "\"") + item + "\"";
  return text + "]";
}

// The sections every daemon of the benchmark shares: big messages allowed (a pool's base graph
// comes in large batches), JSON log lines at info (the takeover's events are read back).
void write_common(std::ofstream& out, const YokedEndpoints& endpoints, const DaemonKnobs& knobs) {
  out << "[endpoints]\n"
      << "ingest = \"" << endpoints.ingest << "\"\n"
      << "publish = \"" << endpoints.publish << "\"\n"
      << "query = \"" << endpoints.query << "\"\n"
      << "metrics = \"" << endpoints.metrics << "\"\n"
      << "[limits]\nmax_message_bytes = 268435456\nmax_events_per_batch = 10000000\n"
      << "[journal]\nmax_record_bytes = 268435456\ndurability = \"" << knobs.durability << "\"\n"
      << "[snapshots]\nafter_events = " << knobs.snapshot_after_events << "\n"
      << "[logging]\nlevel = \"info\"\nformat = \"json\"\n";
}

}  // namespace

void write_local_config(const std::filesystem::path& file, const YokedEndpoints& endpoints,
                        const DaemonKnobs& knobs) {
  std::ofstream out(file);
  write_common(out, endpoints, knobs);
  if (!out) throw std::runtime_error("cannot write " + file.string());
}

void write_instance_config(const std::filesystem::path& file, const InstallationPlan& plan,
                           const std::string& instance, const DaemonKnobs& knobs) {
  const auto self = std::find_if(plan.instances.begin(), plan.instances.end(),
                                 [&](const InstancePlan& one) { return one.name == instance; });
  if (self == plan.instances.end()) {
    throw std::invalid_argument("no instance named " + instance + " in the plan");
  }
  std::ofstream out(file);
  write_common(out, self->endpoints, knobs);
  out << "[cluster]\nbackend = \"jetstream\"\n"
      << "servers = " << quoted_list(plan.servers) << "\n"
      << "stream = \"" << plan.stream << "\"\n"
      << "subject_prefix = \"" << plan.stream << "\"\n"
      << "max_bytes = " << plan.max_bytes << "\n"
      << "instance = \"" << instance << "\"\n"
      << "heartbeat_ms = " << plan.heartbeat_ms << "\n"
      << "takeover_ms = " << plan.takeover_ms << "\n";
  for (const InstancePlan& one : plan.instances) {
    out << "[cluster.instances." << one.name << "]\n"
        << "ingest = \"" << one.endpoints.ingest << "\"\n"
        << "query = \"" << one.endpoints.query << "\"\n"
        << "publish = \"" << one.endpoints.publish << "\"\n"
        << "owns = " << quoted_list(one.owns) << "\n"
        << "stands_by = " << quoted_list(one.stands_by) << "\n";
  }
  if (!out) throw std::runtime_error("cannot write " + file.string());
}

}  // namespace yoke::bench
