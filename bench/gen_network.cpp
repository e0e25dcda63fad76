// gen_network: writes a generated circuit (network_generator.hpp) to standard output.
//
//   gen_network grid NODES [SEED]      square resistive grid of about NODES nodes, one capacitor
//   gen_network ladder SECTIONS [SEED] cable/winding ladder, one inductor
//   gen_network random NODES [SEED]    random network with controlled sources, one capacitor
//   gen_network grid100 NODES [SEED]   the grid with 100 capacitors
//   gen_network chain STATES [SEED]    lossy LC filter chain of STATES/2 sections (several states)
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <string>

#include "network_generator.hpp"

int main(int argc, char** argv) {
  using namespace netfold::bench;
  if (argc < 3) {
    std::cerr << "usage: gen_network grid|ladder|random|grid100|chain SIZE [SEED]\n";
    return 2;
  }
  const std::string kind = argv[1];
  const auto size = static_cast<std::size_t>(std::strtoull(argv[2], nullptr, 10));
  const bool seeded = argc > 3;
  const std::uint64_t seed = seeded ? std::strtoull(argv[3], nullptr, 10) : 0;
  GeneratedNetwork net;
  if (kind == "grid") {
    GridOptions o;
    o.rows = o.cols = grid_side_for(size);
    if (seeded) o.seed = seed;
    net = generate_grid(o);
  } else if (kind == "ladder") {
    LadderOptions o;
    o.sections = size;
    if (seeded) o.seed = seed;
    net = generate_ladder(o);
  } else if (kind == "random") {
    RandomOptions o;
    o.nodes = size;
    if (seeded) o.seed = seed;
    net = generate_random(o);
  } else if (kind == "grid100") {
    GridOptions o;
    o.rows = o.cols = grid_side_for(size);
    o.capacitors = 100;
    if (seeded) o.seed = seed;
    net = generate_grid(o);
  } else if (kind == "chain") {
    RlcLadderOptions o;
    o.sections = size / 2 > 0 ? size / 2 : 1;
    if (seeded) o.seed = seed;
    net = generate_rlc_ladder(o);
  } else {
    std::cerr << "gen_network: unknown kind '" << kind << "', expected grid, ladder, random, grid100 or chain\n";
    return 2;
  }
  std::fwrite(net.text.data(), 1, net.text.size(), stdout);
  std::cerr << kind << ": " << net.nodes << " nodes, " << net.elements << " elements, " << net.text.size()
            << " bytes\n";
  return 0;
}
