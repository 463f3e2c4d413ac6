// The replay loop alone (tools/postmortem/replay_driver.h), fed by a stand-in source: the order
// in which observers hear of a replay, what a refusal and an observer's stop leave behind, and
// that the replayed pool is the pool the same batches give when committed directly.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "tests/cli/exhaustive_matching.h"
#include "tests/event_builders.h"
#include "tools/postmortem/replay_driver.h"
#include "tools/postmortem/replay_error.h"
#include "yoke/certificate.h"

namespace yoke::postmortem {
namespace {

using Batch = std::vector<Event>;

// A source that hands out batches kept in memory, numbered as a script's commits.
class BatchListSource : public CommitSource {
 public:
  explicit BatchListSource(std::vector<Batch> batches) : batches_(std::move(batches)) {}

  HistoryUnit unit() const override { return HistoryUnit::commit; }
  Pool& start() override { return pool_; }
  std::uint64_t start_point() const override { return 0; }
  bool from_snapshot() const override { return false; }

  const ReplayedCommit* next() override {
    if (handed_out_ == batches_.size()) return nullptr;
    const Batch& batch = batches_[handed_out_++];
    current_ = ReplayedCommit{handed_out_, handed_out_, batch, [](std::size_t) { return EventOrigin{}; }};
    return &current_;
  }
  std::size_t remaining() const override { return batches_.size() - handed_out_; }

  std::string refusal(const ReplayedCommit& commit, const EventError& error) const override {
    return "stand-in commit " + std::to_string(commit.at) + ": " + error.message;
  }

 private:
  std::vector<Batch> batches_;
  std::size_t handed_out_ = 0;
  ReplayedCommit current_;
  Pool pool_{Mode::max_weight};
};

// Writes down what it is told, one line per call; stops the replay at commit `stop_at` (0: never).
class RecordingObserver : public CommitObserver {
 public:
  RecordingObserver(std::string name, std::vector<std::string>& lines, std::uint64_t stop_at = 0)
      : name_(std::move(name)), lines_(lines), stop_at_(stop_at) {}

  void started(const Pool&, std::uint64_t at, bool from_snapshot) override {
    lines_.push_back(name_ + " started at " + std::to_string(at) + (from_snapshot ? " snapshot" : ""));
  }
  bool committed(const Pool& pool, const CommitStep& step) override {
    lines_.push_back(name_ + " commit " + std::to_string(step.index) + " at " +
                     std::to_string(step.commit.at) + " pairs " + std::to_string(pool.pairs()));
    return step.index != stop_at_;
  }
  void finished(const Pool&, std::uint64_t at) override {
    lines_.push_back(name_ + " finished at " + std::to_string(at));
  }

 private:
  std::string name_;
  std::vector<std::string>& lines_;
  std::uint64_t stop_at_;
};

// A path 1-2-3-4 whose middle edge first wins, then loses to the two ends.
std::vector<Batch> path_batches() {
  return {
      {set(1, 2, 4), set(2, 3, 10), set(3, 4, 4)},
      {set(1, 2, 5)},
      {set(3, 4, 7)},
  };
}

void expect_certified(const Pool& pool) {
  const PoolExport exported = pool.export_certified();
  const CheckResult checked = check_certificate(exported.graph, exported.certificate);
  EXPECT_TRUE(checked.ok) << checked.failure;
}

TEST(ReplayDriver, TellsObserversInOrderAndLeavesThePoolDirectCommitsGive) {
  BatchListSource source(path_batches());
  Pool& pool = source.start();
  std::vector<std::string> lines;
  RecordingObserver first("a", lines);
  RecordingObserver second("b", lines);
  CommitObserver* observers[] = {&first, &second};

  const ReplayOutcome outcome = replay(source, pool, observers);

  EXPECT_TRUE(outcome.completed);
  EXPECT_EQ(outcome.commits, 3u);
  EXPECT_EQ(outcome.at, 3u);
  EXPECT_EQ(source.remaining(), 0u);
  const std::vector<std::string> expected = {
      "a started at 0", "b started at 0",
      "a commit 1 at 1 pairs 1", "b commit 1 at 1 pairs 1",
      "a commit 2 at 2 pairs 1", "b commit 2 at 2 pairs 1",
      "a commit 3 at 3 pairs 2", "b commit 3 at 3 pairs 2",
      "a finished at 3", "b finished at 3",
  };
  EXPECT_EQ(lines, expected);

  Pool direct(Mode::max_weight);
  for (const Batch& batch : path_batches()) direct.commit(batch);
  EXPECT_EQ(pool.matching(), direct.matching());
  EXPECT_EQ(pool.weight(), direct.weight());
  expect_certified(pool);
  // Exhaustive enumeration over the final path (dense ids 0..3 for keys 1..4).
  const auto optimum =
      cli::testing::exhaustive_optimum(4, {{0, 1, 5}, {1, 2, 10}, {2, 3, 7}}, Mode::max_weight);
  ASSERT_TRUE(optimum.has_value());
  EXPECT_EQ(pool.weight(), optimum->weight);
}

TEST(ReplayDriver, ARefusedCommitStopsWithTheSourcesMessageAndKeepsTheCommitsBefore) {
  std::vector<Batch> batches = path_batches();
  batches.insert(batches.begin() + 1, Batch{set(1, 2, 9), unset(2, 9)});  // 9 does not exist
  BatchListSource source(std::move(batches));
  Pool& pool = source.start();
  std::vector<std::string> lines;
  RecordingObserver observer("a", lines);
  CommitObserver* observers[] = {&observer};

  try {
    replay(source, pool, observers);
    FAIL() << "the refused commit did not stop the replay";
  } catch (const ReplayError& error) {
    EXPECT_NE(std::string(error.what()).find("stand-in commit 2: "), std::string::npos) << error.what();
  }
  // Commit 1 stays; nothing of commit 2 (not even its valid first event) was applied.
  EXPECT_EQ(pool.commits(), 1u);
  EXPECT_EQ(pool.mate_of(2), std::optional<VertexKey>(3));
  EXPECT_EQ(pool.weight(), 10);
  expect_certified(pool);
  const std::vector<std::string> expected = {"a started at 0", "a commit 1 at 1 pairs 1"};
  EXPECT_EQ(lines, expected);
}

TEST(ReplayDriver, AnObserverThatStopsEndsTheReplayBeforeLaterObserversAndTheEnd) {
  BatchListSource source(path_batches());
  Pool& pool = source.start();
  std::vector<std::string> lines;
  RecordingObserver stopper("a", lines, /*stop_at=*/2);
  RecordingObserver later("b", lines);
  CommitObserver* observers[] = {&stopper, &later};

  const ReplayOutcome outcome = replay(source, pool, observers);

  EXPECT_FALSE(outcome.completed);
  EXPECT_EQ(outcome.commits, 2u);
  EXPECT_EQ(outcome.at, 2u);
  EXPECT_EQ(source.remaining(), 1u);
  const std::vector<std::string> expected = {
      "a started at 0", "b started at 0",
      "a commit 1 at 1 pairs 1", "b commit 1 at 1 pairs 1",
      "a commit 2 at 2 pairs 1",
  };
  EXPECT_EQ(lines, expected);
  expect_certified(pool);
}

TEST(ReplayDriver, AnEmptySourceStartsAndFinishesAtItsStartPoint) {
  BatchListSource source({});
  Pool& pool = source.start();
  std::vector<std::string> lines;
  RecordingObserver observer("a", lines);
  CommitObserver* observers[] = {&observer};

  const ReplayOutcome outcome = replay(source, pool, observers);

  EXPECT_TRUE(outcome.completed);
  EXPECT_EQ(outcome.commits, 0u);
  EXPECT_EQ(outcome.at, 0u);
  const std::vector<std::string> expected = {"a started at 0", "a finished at 0"};
  EXPECT_EQ(lines, expected);
}

}  // namespace
}  // namespace yoke::postmortem
