// The stream families and modes the pool's oracle tests sweep, with readable test names
// ("city_maxweight"). Shared by pool_lemon_test, pool_churn_test and pool_hold_test.
#pragma once

#include <gtest/gtest.h>

#include <string>
#include <tuple>

#include "yoke/types.h"
#include "tests/oracles/all_modes.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::oracle {

inline constexpr gen::StreamFamily kStreamFamilies[] = {
    gen::StreamFamily::city, gen::StreamFamily::random, gen::StreamFamily::dispatch,
    gen::StreamFamily::complete, gen::StreamFamily::stress};

using StreamCase = std::tuple<gen::StreamFamily, Mode>;

inline auto all_stream_cases() {
  return testing::Combine(testing::ValuesIn(kStreamFamilies), testing::ValuesIn(kAllModes));
}

inline std::string stream_case_name(const testing::TestParamInfo<StreamCase>& info) {
  return std::string(gen::stream_family_name(std::get<0>(info.param))) + "_" +
         mode_label(std::get<1>(info.param));
}

}  // namespace yoke::oracle
