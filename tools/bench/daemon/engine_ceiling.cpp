#include "engine_ceiling.h"

#include <fcntl.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <ctime>
#include <cstdio>
#include <cstdlib>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "tools/graphgen/event_stream.h"
#include "yoke/pool.h"

extern char** environ;

namespace yoke::bench {
namespace {

// The one-byte messages between the bench and a child.
constexpr char kReady = 'r';
constexpr char kGo = 'g';
constexpr char kDone = 'd';

void write_byte(int fd, char byte) {
  if (::write(fd, &byte, 1) != 1) throw std::runtime_error("ceiling: a pipe write failed");
}

char read_byte(int fd) {
  char byte = 0;
  ssize_t got = 0;
  do {
    got = ::read(fd, &byte, 1);
  } while (got < 0 && errno == EINTR);
  if (got != 1) throw std::runtime_error("ceiling: a child ended early");
  return byte;
}

// A double in the machine's own byte order (both ends are this program on this machine).
void write_double(int fd, double value) {
  if (::write(fd, &value, sizeof value) != sizeof value) {
    throw std::runtime_error("ceiling: a pipe write failed");
  }
}

double read_double(int fd) {
  double value = 0;
  char* bytes = reinterpret_cast<char*>(&value);
  for (std::size_t i = 0; i < sizeof value; ++i) bytes[i] = read_byte(fd);
  return value;
}

double process_cpu_seconds() {
  timespec now{};
  ::clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &now);
  return static_cast<double>(now.tv_sec) + static_cast<double>(now.tv_nsec) * 1e-9;
}

// A started child: its pid, the write end of its stdin and the read end of its stdout.
struct Child {
  pid_t pid = -1;
  int to = -1;
  int from = -1;
};

Child start_child(const std::string& self, const CityStream& stream, std::size_t per_commit) {
  int in[2];
  int out[2];
  if (::pipe2(in, O_CLOEXEC) != 0 || ::pipe2(out, O_CLOEXEC) != 0) {
    throw std::runtime_error("ceiling: pipe2 failed");
  }
  std::vector<std::string> arguments = {self,
                                        kCeilingChildFlag,
                                        std::to_string(stream.vertices),
                                        std::to_string(stream.events),
                                        std::to_string(stream.batch),
                                        stream.mix,
                                        std::to_string(stream.seed),
                                        std::to_string(per_commit)};
  std::vector<char*> argv;
  for (std::string& argument : arguments) argv.push_back(argument.data());
  argv.push_back(nullptr);
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_adddup2(&actions, in[0], STDIN_FILENO);  // dup2 clears CLOEXEC
  posix_spawn_file_actions_adddup2(&actions, out[1], STDOUT_FILENO);
  Child child;
  const int error = posix_spawn(&child.pid, argv[0], &actions, nullptr, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  ::close(in[0]);
  ::close(out[1]);
  child.to = in[1];
  child.from = out[0];
  if (error != 0) {
    ::close(child.to);
    ::close(child.from);
    throw std::runtime_error("ceiling: cannot start " + self);
  }
  return child;
}

void end_child(Child& child) {
  if (child.to >= 0) ::close(child.to);  // a child still waiting for its go reads EOF and ends
  if (child.from >= 0) ::close(child.from);
  int status = 0;
  if (child.pid > 0) ::waitpid(child.pid, &status, 0);
  child = Child{};
}

std::size_t parse_size(const char* text) {
  char* end = nullptr;
  const unsigned long long value = std::strtoull(text, &end, 10);
  if (end == text || *end != '\0') throw std::invalid_argument(std::string("not a number: ") + text);
  return static_cast<std::size_t>(value);
}

}  // namespace

Batches city_batches(const CityStream& stream) {
  gen::StreamSpec spec;
  spec.family = gen::StreamFamily::city;
  spec.vertices = stream.vertices;
  spec.events = stream.events;
  spec.batch_min = spec.batch_max = stream.batch;
  spec.mix = gen::parse_mix(stream.mix);
  spec.seed = stream.seed;
  gen::EventStream events(spec);
  Batches batches;
  std::vector<Event> batch;
  while (events.next_batch(batch)) batches.push_back(batch);
  return batches;
}

Batches commits_of(const Batches& batches, std::size_t per_commit) {
  Batches commits;
  std::vector<Event> joined;
  for (std::size_t b = 1; b < batches.size(); ++b) {
    joined.insert(joined.end(), batches[b].begin(), batches[b].end());
    if (joined.size() >= per_commit || b + 1 == batches.size()) {
      commits.push_back(std::move(joined));
      joined.clear();
    }
  }
  return commits;
}

EngineRun processes_events_per_second(const std::string& self,
                                       const std::vector<CityStream>& streams,
                                       std::size_t per_commit) {
  std::vector<Child> children;
  std::size_t events = 0;
  try {
    for (const CityStream& stream : streams) {
      children.push_back(start_child(self, stream, per_commit));
      events += stream.events;
    }
    // Each draws its stream and repairs its base graph before the clock, one after another's
    // start but all before any is told to go.
    for (const Child& child : children) {
      if (read_byte(child.from) != kReady) throw std::runtime_error("ceiling: no ready");
    }
    const auto start = std::chrono::steady_clock::now();
    for (const Child& child : children) write_byte(child.to, kGo);
    double cpu_seconds = 0;
    for (const Child& child : children) {
      if (read_byte(child.from) != kDone) throw std::runtime_error("ceiling: no done");
    }
    const double seconds =
        std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    for (const Child& child : children) cpu_seconds += read_double(child.from);
    for (Child& child : children) end_child(child);
    const double per_event = 1e6 / static_cast<double>(std::max<std::size_t>(events, 1));
    return EngineRun{static_cast<double>(events) / seconds, cpu_seconds * per_event};
  } catch (...) {
    for (Child& child : children) end_child(child);
    throw;
  }
}

int ceiling_child_main(int argc, char** argv) {
  if (argc != 8) {
    std::fprintf(stderr, "%s: a ceiling child takes 6 arguments\n", argv[0]);
    return 2;
  }
  try {
    CityStream stream;
    stream.vertices = parse_size(argv[2]);
    stream.events = parse_size(argv[3]);
    stream.batch = parse_size(argv[4]);
    stream.mix = argv[5];
    stream.seed = parse_size(argv[6]);
    const std::size_t per_commit = std::max<std::size_t>(parse_size(argv[7]), 1);
    const Batches batches = city_batches(stream);
    const Batches commits = commits_of(batches, per_commit);
    Pool pool(Mode::max_weight);
    pool.commit(batches.front());
    write_byte(STDOUT_FILENO, kReady);
    if (read_byte(STDIN_FILENO) != kGo) return 3;
    const double cpu_before = process_cpu_seconds();
    for (const std::vector<Event>& commit : commits) pool.commit(commit);
    const double cpu = process_cpu_seconds() - cpu_before;
    write_byte(STDOUT_FILENO, kDone);
    write_double(STDOUT_FILENO, cpu);
    return 0;
  } catch (const std::exception& error) {
    std::fprintf(stderr, "%s: ceiling child: %s\n", argv[0], error.what());
    return 1;
  }
}

}  // namespace yoke::bench
