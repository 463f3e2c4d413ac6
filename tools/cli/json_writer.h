// A streaming JSON writer for the commands' output. The solve output and the certificate hold
// up to ~10^6 numbers, so there is no DOM: values are formatted into a buffer that goes to the
// stream in large blocks. Commas and nesting are tracked here; the caller keeps keys and values
// paired.
#pragma once

#include <cstdint>
#include <ostream>
#include <string>
#include <string_view>
#include <vector>

#include "yoke/types.h"

namespace yoke::cli {

class JsonWriter {
 public:
  // `out` must outlive the writer. Nothing reaches `out` before the buffer fills or finish().
  explicit JsonWriter(std::ostream& out);
  JsonWriter(const JsonWriter&) = delete;
  JsonWriter& operator=(const JsonWriter&) = delete;

  void begin_object();
  void end_object();
  void begin_array();
  void end_array();
  // The key of the next value; only inside an object.
  void key(std::string_view name);

  void integer(std::int64_t value);
  void unsigned_integer(std::uint64_t value);
  // Sums of weights over a matching that nothing has bounded yet (verify) may pass int64.
  void wide_integer(Int128 value);
  // A finite number with a fixed number of decimals (a JSON float).
  void number(double value, int decimals);
  void string(std::string_view value);
  void boolean(bool value);
  void null();

  // Starts the next value on a new line (after its comma), so that a large document reads
  // one entry per line.
  void line_break();

  // Hands everything buffered to the stream (and a final newline). The caller checks the
  // stream's state.
  void finish();

 private:
  void before_value();
  void flush_if_full();

  std::ostream& out_;
  std::string buffer_;
  std::vector<bool> scope_is_empty_;  // one entry per open object or array
  bool value_follows_key_ = false;
  bool line_break_pending_ = false;
};

}  // namespace yoke::cli
