// Internal to daemon/cluster: a libnats stream info as a StreamStatus.
#pragma once

#include <nats/nats.h>

#include "daemon/cluster/stream_status.h"

namespace yoke::cluster {

StreamStatus copy_stream_info(const jsStreamInfo& info);

}  // namespace yoke::cluster
