// yoke_memory_soak: a real yoked under a long stream of small batches from many client ids
// over pools that are created and retired generation after generation, with the daemon's
// resident memory (VmRSS of /proc/PID/status) printed over time.
//
// Each generation sends --generation-batches batches into --pools fresh pool names (each
// batch from a client id drawn from --clients ids, which come back in every generation, into
// a pool drawn at random: SET_EDGE events over --keys vertex keys, so each pool's graph stays
// small), waits for every acknowledgement, then retires every pool of the generation. The
// daemon's max_pools is --pools: a pool whose retirement did not free its slot makes the next
// generation's batches refused, which stops the run. Batch numbers grow over the whole run, so
// every batch is fresh for its (pool, client id); the retry ledger holds at most one mark per
// (live pool, client id) and loses a pool's marks with it.
//
// At the end the samples after warm-up are judged against themselves (process_memory.h): the
// largest of the last third must stay within --tolerance of the largest of the first third.
//   ninja -C build yoke_memory_soak yoked
//   build/tests/soak/yoke_memory_soak                          # 10^6 batches, 10^5 client ids
//   build/tests/soak/yoke_memory_soak --batches 10000000 --samples 100
// --no-retire is the control: the same stream into fresh pools that are never retired (the
// daemon before retirement existed), whose memory grows generation after generation.
// CTest runs a short one (memory_soak_smoke). Output: one line per sample, then
//   memory soak: B batches (R retirements of P pools) in S s, X batches/s; rss KiB early E late L
//   ratio Q: flat within T%
// --trend-only prints the same lines without the verdict on memory (CTest's sanitizer build,
// where the RSS is AddressSanitizer's quarantine and shadow, not yoked's own).
// Exit codes: 0 flat (or --trend-only); 1 memory grew past the tolerance, or the daemon refused or failed to
// answer; 2 bad options.
#include <sys/types.h>

#include <chrono>
#include <cstdint>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <random>
#include <stdexcept>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>
#include <zmq.hpp>

#include "process_memory.h"
#include "tools/bench/daemon/yoked_process.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/query.pb.h"

namespace {

using Clock = std::chrono::steady_clock;

struct SoakOptions {
  std::uint64_t batches = 1'000'000;
  std::uint64_t clients = 100'000;
  std::uint32_t pools = 16;
  std::uint64_t generation_batches = 4000;
  std::uint32_t events = 4;
  std::uint32_t keys = 48;
  std::uint32_t in_flight = 256;
  std::uint32_t samples = 40;
  double warmup = 0.3;
  double tolerance = 0.10;
  std::string durability = "none";
  std::string yoked = YOKE_YOKED_BINARY;
  std::uint64_t seed = 1;
  bool keep = false;
  bool no_retire = false;  // the control: fresh pools every generation, none retired
  bool trend_only = false;  // print the memory trend without judging it (sanitizer builds)
};

// The daemon's ingest socket with a bounded number of requests in flight; every reply must be
// an acceptance.
class IngestPipe {
 public:
  IngestPipe(zmq::context_t& context, const std::string& endpoint, std::uint32_t in_flight)
      : socket_(context, zmq::socket_type::dealer), in_flight_(in_flight) {
    socket_.set(zmq::sockopt::linger, 0);
    socket_.connect(endpoint);
  }

  void send(const yoke::v1::IngestRequest& request) {
    while (outstanding_ >= in_flight_) receive_one();
    const std::string bytes = request.SerializeAsString();
    socket_.send(zmq::buffer(bytes), zmq::send_flags::none);
    ++outstanding_;
  }
  void drain() {
    while (outstanding_ > 0) receive_one();
  }

 private:
  void receive_one() {
    zmq::pollitem_t item{socket_.handle(), 0, ZMQ_POLLIN, 0};
    if (zmq::poll(&item, 1, std::chrono::seconds(60)) == 0) {
      throw std::runtime_error("no acknowledgement within 60 s");
    }
    zmq::message_t message;
    (void)socket_.recv(message);
    yoke::v1::IngestReply reply;
    if (!reply.ParseFromArray(message.data(), static_cast<int>(message.size())) ||
        !reply.has_ack()) {
      throw std::runtime_error("unreadable reply from the daemon");
    }
    const yoke::v1::Ack& ack = reply.ack();
    if (!ack.has_accepted() || ack.accepted().duplicate()) {
      const std::string why = ack.has_rejected() && ack.rejected().errors_size() > 0
                                  ? yoke::v1::Error::Code_Name(ack.rejected().errors(0).code()) +
                                        ": " + ack.rejected().errors(0).message()
                                  : "a duplicate";
      throw std::runtime_error("pool " + ack.pool() + ", client " + ack.client_id() +
                               " batch " + std::to_string(ack.client_batch()) + ": " + why);
    }
    --outstanding_;
  }

  zmq::socket_t socket_;
  std::uint32_t in_flight_;
  std::uint32_t outstanding_ = 0;
};

std::uint32_t pools_held(zmq::context_t& context, const std::string& endpoint) {
  zmq::socket_t socket(context, zmq::socket_type::dealer);
  socket.set(zmq::sockopt::linger, 0);
  socket.connect(endpoint);
  yoke::v1::QueryRequest request;
  request.set_version(yoke::v1::PROTOCOL_VERSION_1);
  request.mutable_health();
  socket.send(zmq::buffer(request.SerializeAsString()), zmq::send_flags::none);
  zmq::pollitem_t item{socket.handle(), 0, ZMQ_POLLIN, 0};
  if (zmq::poll(&item, 1, std::chrono::seconds(30)) == 0) {
    throw std::runtime_error("no answer to a health query");
  }
  zmq::message_t message;
  (void)socket.recv(message);
  yoke::v1::QueryReply reply;
  if (!reply.ParseFromArray(message.data(), static_cast<int>(message.size())) ||
      !reply.has_health()) {
    throw std::runtime_error("the health query was not answered with a health reply");
  }
  return reply.health().pools();
}

void write_config(const std::filesystem::path& path, const yoke::bench::YokedEndpoints& at,
                  const SoakOptions& options) {
  std::ofstream out(path);
  out << "[endpoints]\ningest = \"" << at.ingest << "\"\npublish = \"" << at.publish
      << "\"\nquery = \"" << at.query << "\"\nmetrics = \"" << at.metrics << "\"\n"
      << "[logging]\nlevel = \"warn\"\n"
      << "[journal]\ndurability = \"" << options.durability << "\"\nsegment_bytes = 8388608\n"
      << "[snapshots]\nafter_events = 200000\n"
      << "[limits]\nmax_pools = " << (options.no_retire ? 1000000 : options.pools) << "\n";
  if (!out) throw std::runtime_error("cannot write " + path.string());
}

int run(const SoakOptions& options) {
  char pattern[] = "/tmp/yoke-memory-soak-XXXXXX";
  if (mkdtemp(pattern) == nullptr) throw std::runtime_error("cannot make a work directory");
  const std::filesystem::path work(pattern);
  const yoke::bench::YokedEndpoints endpoints = yoke::bench::free_loopback_endpoints();
  write_config(work / "yoked.toml", endpoints, options);
  zmq::context_t context;
  yoke::bench::YokedProcess yoked(options.yoked, work / "data", work / "yoked.toml");
  yoked.wait_ready(context, endpoints.query, std::chrono::seconds(60));
  std::cout << "yoked pid " << yoked.pid() << ", work directory " << work.string() << '\n'
            << "rss at start: " << yoke::soak::resident_kib(yoked.pid()).value_or(0) << " KiB\n";

  IngestPipe pipe(context, endpoints.ingest, options.in_flight);
  std::mt19937_64 random(options.seed);
  const auto below = [&random](std::uint64_t n) { return random() % n; };
  const std::uint64_t sample_every = std::max<std::uint64_t>(1, options.batches / options.samples);
  std::vector<std::uint64_t> samples;
  std::uint64_t number = 0;  // batch numbers grow over the whole run: always fresh
  std::uint64_t retirements = 0;
  const Clock::time_point start = Clock::now();
  std::uint64_t sent = 0;
  for (std::uint64_t generation = 0; sent < options.batches; ++generation) {
    const std::string prefix = "soak-" + std::to_string(generation) + "-";
    const std::uint64_t end = std::min(options.batches, sent + options.generation_batches);
    const std::uint64_t generation_start = sent;
    for (; sent < end; ++sent) {
      yoke::v1::IngestRequest request;
      request.set_version(yoke::v1::PROTOCOL_VERSION_1);
      yoke::v1::EventBatch& batch = *request.mutable_batch();
      batch.set_client_id("soak-client-" + std::to_string(below(options.clients)));
      batch.set_client_batch(++number);
      // Every pool of the generation gets a batch first, so that each exists to be retired.
      const std::uint64_t index = sent - generation_start;
      batch.set_pool(prefix + std::to_string(index < options.pools ? index
                                                                   : below(options.pools)));
      for (std::uint32_t e = 0; e < options.events; ++e) {
        const std::uint64_t u = 1 + below(options.keys);
        const std::uint64_t v = 1 + (u + below(options.keys - 1)) % options.keys;
        yoke::v1::Event& event = *batch.add_events();
        event.set_kind(yoke::v1::Event::SET_EDGE);
        event.set_u(u);
        event.set_v(v);
        event.set_w(static_cast<std::int64_t>(1 + below(1000)));
      }
      pipe.send(request);
      if ((sent + 1) % sample_every == 0) {
        const std::uint64_t kib = yoke::soak::resident_kib(yoked.pid()).value_or(0);
        samples.push_back(kib);
        const double seconds = std::chrono::duration<double>(Clock::now() - start).count();
        std::printf("batches %10llu  pools retired %7llu  rss %8llu KiB  %6.1f s\n",
                    static_cast<unsigned long long>(sent + 1),
                    static_cast<unsigned long long>(retirements),
                    static_cast<unsigned long long>(kib), seconds);
        std::fflush(stdout);
      }
    }
    pipe.drain();
    if (options.no_retire) continue;
    for (std::uint32_t k = 0; k < options.pools; ++k) {
      yoke::v1::IngestRequest request;
      request.set_version(yoke::v1::PROTOCOL_VERSION_1);
      yoke::v1::RetirePool& retire = *request.mutable_retire();
      retire.set_client_id("soak-retirer");
      retire.set_client_batch(++number);
      retire.set_pool(prefix + std::to_string(k));
      pipe.send(request);
    }
    pipe.drain();
    retirements += options.pools;
  }
  const double seconds = std::chrono::duration<double>(Clock::now() - start).count();
  const std::uint32_t left = pools_held(context, endpoints.query);
  yoked.stop(false);
  if (!options.keep) std::filesystem::remove_all(work);

  const yoke::soak::MemoryTrend trend =
      yoke::soak::memory_trend(samples, options.warmup, options.tolerance);
  std::printf("memory soak: %llu batches (%llu retirements of %u pools) in %.1f s, %.0f "
              "batches/s; pools held at the end: %u\n",
              static_cast<unsigned long long>(sent), static_cast<unsigned long long>(retirements),
              options.pools, seconds, static_cast<double>(sent) / seconds, left);
  if (!trend.problem.empty()) {
    std::cout << "no verdict: " << trend.problem << '\n';
    return 1;
  }
  std::printf("rss KiB early %llu late %llu ratio %.3f: %s within %.0f%%\n",
              static_cast<unsigned long long>(trend.early_kib),
              static_cast<unsigned long long>(trend.late_kib), trend.ratio,
              trend.flat ? "flat" : "GREW, not", options.tolerance * 100);
  if (options.trend_only) std::cout << "(the trend is not judged: --trend-only)\n";
  if (left != 0 && !options.no_retire) {
    std::cout << "the daemon still holds " << left << " pools after every retirement\n";
    return 1;
  }
  return trend.flat || options.trend_only ? 0 : 1;
}

}  // namespace

int main(int argc, char** argv) {
  SoakOptions options;
  CLI::App app("yoked's memory under a long stream over pools created and retired");
  app.add_option("--batches", options.batches, "Batches in all")->capture_default_str();
  app.add_option("--clients", options.clients, "Distinct client ids, re-used")
      ->check(CLI::Range(std::uint64_t{1}, std::uint64_t{100'000'000}))
      ->capture_default_str();
  app.add_option("--pools", options.pools, "Pools per generation (and the daemon's max_pools)")
      ->check(CLI::Range(1u, 100000u))
      ->capture_default_str();
  app.add_option("--generation-batches", options.generation_batches,
                 "Batches per generation, before its pools are retired")
      ->check(CLI::PositiveNumber)
      ->capture_default_str();
  app.add_option("--events", options.events, "SET_EDGE events per batch")
      ->check(CLI::Range(1u, 10000u))
      ->capture_default_str();
  app.add_option("--keys", options.keys, "Vertex keys per pool")
      ->check(CLI::Range(2u, 1000000u))
      ->capture_default_str();
  app.add_option("--in-flight", options.in_flight, "Requests awaiting acknowledgement, at most")
      ->check(CLI::Range(1u, 100000u))
      ->capture_default_str();
  app.add_option("--samples", options.samples, "RSS samples over the run")
      ->check(CLI::Range(3u, 100000u))
      ->capture_default_str();
  app.add_option("--warmup", options.warmup, "Fraction of the samples before the comparison")
      ->check(CLI::Range(0.0, 0.9))
      ->capture_default_str();
  app.add_option("--tolerance", options.tolerance, "Allowed growth, late over early")
      ->check(CLI::Range(0.0, 10.0))
      ->capture_default_str();
  app.add_option("--durability", options.durability, "The daemon's journal durability")
      ->check(CLI::IsMember({"every-batch", "group", "none"}))
      ->capture_default_str();
  app.add_option("--yoked", options.yoked, "The yoked binary")->capture_default_str();
  app.add_option("--seed", options.seed, "Random seed")->capture_default_str();
  app.add_flag("--keep", options.keep, "Keep the work directory (data, log)");
  app.add_flag("--no-retire", options.no_retire,
               "The control: never retire (max_pools 10^6); memory should grow");
  app.add_flag("--trend-only", options.trend_only,
               "Print the memory trend but do not fail on it (the allocator is not yoked's: "
               "AddressSanitizer keeps freed memory in quarantine)");
  CLI11_PARSE(app, argc, argv);
  if (options.generation_batches < options.pools) {
    std::cerr << "memory soak: --generation-batches must be at least --pools\n";
    return 2;
  }
  try {
    return run(options);
  } catch (const std::exception& error) {
    std::cerr << "memory soak: " << error.what() << '\n';
    return 1;
  }
}
