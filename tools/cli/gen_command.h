// `yoke gen FAMILY [options] [--seed S] [-o FILE]`: writes a seeded graph of one of the test and
// benchmark families (tools/graphgen) as an edge list that `yoke solve` reads.
// `yoke gen stream FAMILY [options]`: writes a seeded event stream on such a graph as an event
// script (docs/formats.md), one `commit` per batch.
#pragma once

#include <cstdint>
#include <string>

#include <CLI/CLI.hpp>

#include "yoke/types.h"

namespace yoke::cli {

struct GenOptions {
  struct City {
    std::size_t vertices = 1000;
    int neighbours = 6;
  };
  struct Random {
    std::size_t vertices = 1000;
    std::size_t edges = 4000;
    Weight min_weight = 1;
    Weight max_weight = 1000;
  };
  struct Dispatch {
    std::size_t couriers = 200;
    std::size_t orders = 250;
    int per_order = 6;
  };
  struct Complete {
    std::size_t vertices = 40;
    Weight min_weight = 1;
    Weight max_weight = 1000;
  };
  struct Stress {
    std::size_t vertices = 1000;
  };
  struct Stream {
    std::string family = "city";  // base graph family, as the subcommands above are named
    std::size_t vertices = 1000;
    std::size_t events = 10000;   // after the first batch, which sets the base graph
    std::size_t batch = 100;
    std::size_t batch_max = 0;    // > 0: batch sizes uniform in [batch, batch_max]
    std::string mix = "bench";    // see gen::parse_mix
    bool scrambled_keys = false;
    int degree = 6;               // city: neighbours; dispatch: couriers per order; random: mean
    bool action_batches = false;  // one action per batch; --events counts batches
    Weight weight_grain = 1;      // > 1: weights rounded to multiples of it (ties)
  };

  std::string family;  // the family subcommand that was given
  std::uint64_t seed = 1;
  std::string output_path = "-";
  City city;
  Random random;
  Dispatch dispatch;
  Complete complete;
  Stress stress;
  Stream stream;
};

CLI::App* add_gen_command(CLI::App& app, GenOptions& options);

// Returns kExitOk. Throws CliError for parameters the family cannot honour.
int run_gen(const GenOptions& options);

}  // namespace yoke::cli
