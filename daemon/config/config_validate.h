// Checks a config as a whole, after the file and the flags: what no single key can check.
#pragma once

#include "daemon_config.h"

namespace yoke::daemon {

// Throws ConfigError for: no data dir; a malformed endpoint; two endpoints binding the same
// address; a message limit larger than a journal record; pool settings PoolRegistry refuses
// (they cannot stay exact); what validate_cluster (cluster_section.h) refuses. Builds a
// PoolRegistry per pool setting (no pool is created).
void validate_config(const DaemonConfig& config);

}  // namespace yoke::daemon
