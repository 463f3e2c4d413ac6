// Whole-file input and checked file output for the commands. "-" means stdin or stdout.
#pragma once

#include <fstream>
#include <string>

namespace yoke::cli {

// The whole content of `path` ("-" reads stdin to its end). Throws CliError naming the file.
std::string read_whole_input(const std::string& path);

// Opens `path` for writing, truncating it. Throws CliError naming the file.
std::ofstream open_output_file(const std::string& path);

// Flushes and closes `out`; throws CliError naming `path` if any write failed (disk full...).
void close_output_file(std::ofstream& out, const std::string& path);

// How errors name an input: the path itself, or "<stdin>" for "-".
std::string display_name(const std::string& path);

}  // namespace yoke::cli
