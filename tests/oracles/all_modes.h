// The three modes every oracle sweep runs in, and their spelling in test names.
#pragma once

#include <string>

#include "yoke/types.h"

namespace yoke::oracle {

inline constexpr Mode kAllModes[] = {Mode::max_weight, Mode::max_cardinality, Mode::perfect};

// "maxweight", "maxcardinality", "perfect": GoogleTest names allow no '-'.
inline std::string mode_label(Mode mode) {
  std::string label = mode_name(mode);
  std::erase(label, '-');
  return label;
}

}  // namespace yoke::oracle
