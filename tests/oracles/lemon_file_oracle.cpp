// oracle_lemon_file FILE MODE: LEMON's optimum of an edge-list file, as one JSON line
//   {"oracle":"LEMON 1.3.1","mode":"...","feasible":true,"weight":W,"pairs":K}
// so that the Python oracle scripts can add LEMON's opinion on the same file (e.g. the
// Les Miserables graph, or ids near 2^64). No yoke solver code runs here.
#include <fstream>
#include <iostream>

#include "edge_list.h"
#include "lemon_oracle.h"

int main(int argc, char** argv) {
  if (argc != 3) {
    std::cerr << "usage: oracle_lemon_file FILE max-weight|max-cardinality|perfect\n";
    return 2;
  }
  try {
    std::ifstream in(argv[1]);
    if (!in) throw std::runtime_error(std::string("cannot open ") + argv[1]);
    const yoke::Mode mode = yoke::parse_mode(argv[2]);
    const auto loaded = yoke::oracle::read_edge_list(in);
    const auto answer = yoke::oracle::lemon_optimum(loaded.graph, mode);
    std::cout << "{\"oracle\":\"LEMON 1.3.1\",\"mode\":\"" << yoke::mode_name(mode)
              << "\",\"feasible\":" << (answer.feasible ? "true" : "false")
              << ",\"weight\":" << answer.weight << ",\"pairs\":" << answer.pairs << "}\n";
  } catch (const std::exception& error) {
    std::cerr << "oracle_lemon_file: " << error.what() << '\n';
    return 1;
  }
  return 0;
}
