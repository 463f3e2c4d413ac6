// What an outside oracle says about the optimum of one graph in one mode.
#pragma once

#include <cstddef>

#include "yoke/types.h"

namespace yoke::oracle {

struct Answer {
  bool feasible = true;   // false only in perfect mode, when no perfect matching exists
  Weight weight = 0;      // optimum total of the original edge weights
  std::size_t pairs = 0;  // pairs of the oracle's matching; unique except in max-weight mode
};

}  // namespace yoke::oracle
