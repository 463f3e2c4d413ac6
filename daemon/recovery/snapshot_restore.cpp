#include "snapshot_restore.h"

#include <string>

#include "yoke/certificate.h"

namespace yoke::daemon {

std::unique_ptr<Pool> restore_checked(const v1::SnapshotRecord& record) {
  const auto damaged = [&record](const std::string& why) {
    return SnapshotDamage("pool " + record.pool() + " at seq " + std::to_string(record.seq()) +
                          ": " + why);
  };
  if (record.engine_state_format() != kEngineStateFormat) {
    throw damaged("unknown engine state format " + std::to_string(record.engine_state_format()));
  }
  std::unique_ptr<Pool> pool;
  try {
    pool = Pool::restore(record.engine_state());
  } catch (const InputError& error) {
    throw damaged(std::string("the engine state does not restore: ") + error.what());
  }
  const PoolExport exported = pool->export_certified();
  const CheckResult check = check_certificate(exported.graph, exported.certificate);
  if (!check.ok) throw damaged("the restored certificate fails: " + check.failure);
  if (pool->weight() != record.weight() || pool->pairs() != record.pairs() ||
      pool->vertex_count() != record.vertices() || pool->edge_count() != record.edges()) {
    throw damaged("the restored pool's weight, pairs or size disagree with the record");
  }
  return pool;
}

}  // namespace yoke::daemon
