// Little-endian binary writing and bounds-checked reading, for pool snapshots. A reader never
// reads past its input: a short or inconsistent input throws InputError instead.
#pragma once

#include <bit>
#include <cstdint>
#include <cstring>
#include <string>
#include <string_view>
#include <type_traits>
#include <vector>

#include "yoke/types.h"

namespace yoke {

class ByteWriter {
 public:
  template <class T>
  void put(T value) {
    static_assert(std::is_trivially_copyable_v<T> && std::endian::native == std::endian::little);
    const auto* bytes = reinterpret_cast<const char*>(&value);
    out_.append(bytes, sizeof(T));
  }
  // A count, then the elements as they lie in memory.
  template <class T>
  void put_vector(const std::vector<T>& values) {
    static_assert(std::is_trivially_copyable_v<T>);
    put<std::uint64_t>(values.size());
    if (values.empty()) return;  // data() may be null
    out_.append(reinterpret_cast<const char*>(values.data()), values.size() * sizeof(T));
  }
  std::string take() { return std::move(out_); }

 private:
  std::string out_;
};

class ByteReader {
 public:
  explicit ByteReader(std::string_view in) : in_(in) {}

  template <class T>
  T get() {
    static_assert(std::is_trivially_copyable_v<T>);
    need(sizeof(T));
    T value;
    std::memcpy(&value, in_.data() + at_, sizeof(T));
    at_ += sizeof(T);
    return value;
  }
  template <class T>
  std::vector<T> get_vector(std::size_t most) {
    const auto count = get<std::uint64_t>();
    if (count > most) fail("a list is longer than the state allows");
    need(count * sizeof(T));
    std::vector<T> values(count);
    if (count == 0) return values;  // memcpy must not see the null data() of an empty vector
    std::memcpy(values.data(), in_.data() + at_, count * sizeof(T));
    at_ += count * sizeof(T);
    return values;
  }
  bool done() const { return at_ == in_.size(); }
  std::size_t remaining() const { return in_.size() - at_; }
  [[noreturn]] static void fail(const std::string& why) {
    throw InputError("pool snapshot is not valid: " + why);
  }

 private:
  void need(std::size_t bytes) const {
    if (in_.size() - at_ < bytes) fail("it ends early");
  }
  std::string_view in_;
  std::size_t at_ = 0;
};

}  // namespace yoke
