#include "event_script_writer.h"

#include <charconv>

#include "event_script_syntax.h"

namespace yoke::formats {

void append_event_line(std::string& out, const Event& event) {
  // to_chars, as the edge-list writer does: iostream number formatting is the slow part.
  char field[24];
  auto put = [&](auto value) {
    out.push_back(' ');
    out.append(field, std::to_chars(field, field + sizeof field, value).ptr);
  };
  const script_syntax::VerbForm& form = script_syntax::form_of(event.kind);
  out += form.verb;
  put(event.u);
  if (form.field_count >= 2) put(event.v);
  if (form.field_count >= 3) put(event.w);
}

std::string event_line(const Event& event) {
  std::string line;
  append_event_line(line, event);
  return line;
}

void write_event_script(std::ostream& out, std::span<const Event> batch) {
  constexpr std::size_t kBufferBytes = 1 << 16;
  std::string buffer;
  buffer.reserve(kBufferBytes);
  for (const Event& event : batch) {
    append_event_line(buffer, event);
    buffer.push_back('\n');
    if (buffer.size() > kBufferBytes - 80) {
      out.write(buffer.data(), static_cast<std::streamsize>(buffer.size()));
      buffer.clear();
    }
  }
  buffer += script_syntax::kCommit;
  buffer.push_back('\n');
  out.write(buffer.data(), static_cast<std::streamsize>(buffer.size()));
}

}  // namespace yoke::formats
