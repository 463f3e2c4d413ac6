#include "config_overrides.h"

#include "config_file.h"
#include "config_validate.h"

namespace yoke::daemon {

void apply_overrides(const ConfigOverrides& overrides, DaemonConfig& config) {
  if (overrides.data_dir) config.data_dir = *overrides.data_dir;
  if (overrides.ingest) config.endpoints.ingest = *overrides.ingest;
  if (overrides.publish) config.endpoints.publish = *overrides.publish;
  if (overrides.query) config.endpoints.query = *overrides.query;
  if (overrides.metrics) config.endpoints.metrics = *overrides.metrics;
  if (overrides.log_format) config.logging.format = *overrides.log_format;
}

DaemonConfig load_config(const ConfigOverrides& overrides) {
  DaemonConfig config;
  if (overrides.config_file) read_config_file(*overrides.config_file, config);
  apply_overrides(overrides, config);
  validate_config(config);
  return config;
}

}  // namespace yoke::daemon
