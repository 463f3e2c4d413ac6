#include "tools/bench/stored_stream.h"

#include <stdexcept>
#include <string>

#include "tools/bench/stopwatch.h"

namespace yoke::bench {

StoredStream store_stream(const gen::StreamSpec& spec) {
  const Stopwatch watch;
  StoredStream stored;
  {
    gen::EventStream stream(spec);
    EventClassifier classifier;
    stored.base_vertices = stream.base_vertices();
    stored.base_edges = stream.base_edges();
    stream.next_batch(stored.base);
    classifier.classify(stored.base, nullptr);
    stored.events.reserve(spec.events);
    stored.batch_end.reserve(spec.events / spec.batch_min + 1);
    std::vector<Event> batch;
    while (stream.next_batch(batch)) {
      classifier.classify(batch, &stored.tally);
      stored.events.insert(stored.events.end(), batch.begin(), batch.end());
      stored.batch_end.push_back(stored.events.size());
    }
  }
  stored.generate_ms = watch.elapsed_ms();
  return stored;
}

void reject_if_invalid(const Pool& pool, std::span<const Event> batch, std::size_t commit) {
  if (const auto error = pool.check(batch)) {
    throw std::runtime_error("the pool rejects generated batch " + std::to_string(commit) +
                             " at event " + std::to_string(error->index) + ": " +
                             error->message);
  }
}

}  // namespace yoke::bench
