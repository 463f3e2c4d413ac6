// What the commit log and the snapshot store throw, whichever backend holds them.
#pragma once

#include <stdexcept>

namespace yoke::storage {

// The log or the store cannot do what was asked: a failed system call or network request, a
// request it refuses (a read from a position it no longer holds, a write after a failed
// write), or stored entries it cannot trust (LogDamage). The message names the file or
// subject and why.
class LogError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// Stored log entries that fail their checks where no torn write can explain them (not the tail
// the last write may have left): the daemon must not start, records after them would be lost.
class LogDamage : public LogError {
 public:
  using LogError::LogError;
};

// A snapshot that cannot be trusted: short, a wrong checksum, a bad header or record, a state
// that does not restore or disagrees with its record. Readers fall back to an older snapshot.
class SnapshotDamage : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace yoke::storage
