// Conversions between the engine's types and their yoke.v1 wire forms (proto/yoke/v1), and the
// Error values every socket replies with.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "engine/pool.h"
#include "yoke/v1/pool.pb.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::daemon {

v1::Mode to_wire(Mode mode);
// Nothing for MODE_UNSPECIFIED and values this version does not know.
std::optional<Mode> from_wire(v1::Mode mode);

v1::PoolConfig to_wire(Mode mode, const PoolLimits& limits);
// Nothing when a bound does not fit the engine's types.
std::optional<PoolLimits> from_wire(const v1::PoolLimits& limits);
v1::Pair to_wire(const MatchedPair& pair);
v1::RepairStats to_wire(const RepairStats& stats);

v1::Error::Code to_wire(EventErrorCode code);

v1::Error make_error(v1::Error::Code code, std::string message,
                     std::optional<std::uint32_t> event_index = std::nullopt);

// "WEIGHT_OUT_OF_RANGE" and so on, for logs and metrics labels.
std::string error_code_name(v1::Error::Code code);

}  // namespace yoke::daemon
