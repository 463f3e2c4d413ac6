#include "tools/bench/instances.h"

namespace yoke::bench {
namespace {

constexpr int kCityNeighbours = 10;
constexpr int kCouriersPerOrder = 10;

Instance city(const std::string& name, std::size_t n, std::uint64_t seed) {
  return {name, "city", [=] { return gen::city(n, kCityNeighbours, seed); }};
}

Instance sparse(const std::string& name, std::size_t n, std::size_t m, std::uint64_t seed) {
  return {name, "sparse_random", [=] { return gen::sparse_random(n, m, 1, 1000000, seed); }};
}

Instance dispatch(const std::string& name, std::size_t couriers, std::size_t orders,
                  std::uint64_t seed) {
  return {name, "dispatch_bipartite",
          [=] { return gen::dispatch_bipartite(couriers, orders, kCouriersPerOrder, seed); }};
}

}  // namespace

std::vector<Instance> default_instances(std::uint64_t seed) {
  return {
      city("city-10k", 10000, seed),
      city("city-100k", 100000, seed),
      city("city-300k", 300000, seed),
      sparse("sparse-100k-1M", 100000, 1000000, seed),
      dispatch("dispatch-50k+50k", 50000, 50000, seed),
  };
}

std::vector<Instance> quick_instances(std::uint64_t seed) {
  return {
      city("city-2k", 2000, seed),
      sparse("sparse-2k-10k", 2000, 10000, seed),
      dispatch("dispatch-1k+1k", 1000, 1000, seed),
      {"complete-120", "complete", [=] { return gen::complete(120, -1000, 1000000, seed); }},
      {"stress-3k", "blossom_stress", [=] { return gen::blossom_stress(3000, seed); }},
  };
}

}  // namespace yoke::bench
