// Escaping of log text, so that a value read off the wire can never forge a line or a field.
#pragma once

#include <string>
#include <string_view>

namespace yoke::daemon {

// Appends `text` as a JSON string literal (with its quotes). Quotes, backslashes and control
// characters are escaped; valid UTF-8 passes through; each byte of invalid UTF-8 becomes
// U+FFFD, so the line is always valid JSON.
void append_json_string(std::string& out, std::string_view text);

// Appends `text` as a text-log value: bare when it is a non-empty run of printable characters
// without spaces, quotes, backslashes or '='; otherwise in double quotes with \" \\ \n \r \t
// and \xHH for other control characters and for bytes of invalid UTF-8.
void append_text_value(std::string& out, std::string_view text);

// Appends a free-form text-log message as is, except that control characters and bytes of
// invalid UTF-8 are escaped as in append_text_value (no quotes added): one record, one line.
void append_text_message(std::string& out, std::string_view text);

}  // namespace yoke::daemon
