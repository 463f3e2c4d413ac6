// A writer process killed with SIGKILL at a random moment: every record whose sync() had
// returned before the kill is there after recovery, and appending goes on after it.
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/types.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstring>
#include <random>

#include "daemon/journal/journal.h"
#include "journal_test_util.h"

namespace yoke::journal {
namespace {

using testing::payload_for;
using testing::TempDir;

constexpr std::size_t kMaxPayload = 300;

Options crash_options(Durability durability) {
  return testing::small_segments(2048, durability);
}

// The child: appends batches of records forever and, once a batch is durable, writes its last
// position to the pipe. Never returns.
[[noreturn]] void run_writer(const std::filesystem::path& dir, Durability durability,
                             int report_fd, std::uint64_t seed) {
  try {
    std::mt19937_64 random(seed);
    Journal journal = Journal::open(dir, crash_options(durability));
    std::uint64_t position = 0;
    while (position < 1'000'000) {  // ends long after the parent's kill, in case the parent fails
      const std::uint64_t batch = 1 + random() % 8;
      for (std::uint64_t i = 0; i < batch; ++i) {
        ++position;
        journal.append(position, payload_for(position, kMaxPayload));
      }
      if (durability != Durability::every_batch) journal.sync();
      if (::write(report_fd, &position, sizeof position) != sizeof position) ::_exit(3);
    }
    ::_exit(0);
  } catch (...) {
    ::_exit(2);
  }
}

// Reads one report; false at the end of the pipe.
bool read_report(int fd, std::uint64_t& position) {
  char bytes[sizeof position];
  std::size_t got = 0;
  while (got < sizeof bytes) {
    const ssize_t n = ::read(fd, bytes + got, sizeof bytes - got);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) return false;
    got += static_cast<std::size_t>(n);
  }
  std::memcpy(&position, bytes, sizeof position);
  return true;
}

TEST(JournalCrash, SigkillLosesNothingSynced) {
  std::mt19937_64 random(0x6a6f75726e616cULL);  // fixed: the same kill points every run
  for (int round = 0; round < 6; ++round) {
    SCOPED_TRACE("round " + std::to_string(round));
    const Durability durability = round % 2 == 0 ? Durability::group : Durability::every_batch;
    TempDir dir;
    int pipe_fds[2];
    ASSERT_EQ(::pipe(pipe_fds), 0);
    const std::uint64_t child_seed = random();
    const pid_t child = ::fork();
    ASSERT_GE(child, 0);
    if (child == 0) {
      ::close(pipe_fds[0]);
      run_writer(dir.path(), durability, pipe_fds[1], child_seed);
    }
    ::close(pipe_fds[1]);

    // Let a random number of batches become durable, then kill at a random moment after.
    const std::uint64_t reports_before_kill = 1 + random() % 30;
    std::uint64_t synced = 0;
    std::uint64_t reported = 0;
    for (std::uint64_t position = 0;
         reported < reports_before_kill && read_report(pipe_fds[0], position);
         ++reported) {
      synced = position;
    }
    ::usleep(static_cast<useconds_t>(random() % 3000));
    ASSERT_EQ(::kill(child, SIGKILL), 0);
    // Whatever is in the pipe was written after its sync() returned, so before the kill.
    for (std::uint64_t position = 0; read_report(pipe_fds[0], position);) synced = position;
    ::close(pipe_fds[0]);
    int status = 0;
    ASSERT_EQ(::waitpid(child, &status, 0), child);
    ASSERT_TRUE(WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL)
        << "the writer ended by itself, status " << status;
    ASSERT_GT(synced, 0u);

    Journal journal = Journal::open(dir.path(), crash_options(durability));
    const std::uint64_t recovered = journal.recovery().records;
    EXPECT_GE(recovered, synced);
    EXPECT_EQ(journal.next_position(), recovered + 1);
    testing::append_range(journal, recovered + 1, recovered + 10, kMaxPayload);
    EXPECT_EQ(testing::read_all(dir.path()),
              testing::expected_range(1, recovered + 10, kMaxPayload));
  }
}

}  // namespace
}  // namespace yoke::journal
