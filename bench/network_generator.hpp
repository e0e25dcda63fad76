#pragma once
/// \file network_generator.hpp
/// Generators of large `.nf` circuits for the benchmarks and the solver tests: a 2-D resistive
/// grid (a power-distribution or sensor-array model), a ladder (a cable or a winding), and a
/// random sparse network with controlled sources, each with one storage element (the grid with
/// as many capacitors as asked); and a lossy LC filter chain with two states per section. Each is
/// connected, and is deterministic: the same options give the same text, byte for byte, on
/// every platform (the pseudo-random numbers come from SplitMix64, not from <random>, whose
/// distributions differ between standard libraries).
///
/// Example:
/// \code
///   auto net = netfold::bench::generate_grid({.rows = 100, .cols = 100});
///   // net.nodes == 10000, net.elements == 19802 (19800 resistors, V1, C1)
///   netfold::Circuit c = netfold::parse_netlist(net.text, "grid.nf");
/// \endcode

#include <cstddef>
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include <fmt/format.h>

namespace netfold::bench {

/// What a generator wrote, with the names a benchmark needs to refer to.
struct GeneratedNetwork {
  std::string text;         ///< the `.nf` file
  std::size_t nodes = 0;    ///< nodes other than the reference
  std::size_t elements = 0; ///< element lines
  std::string source;       ///< the independent source's name
  std::string storage;      ///< the storage element's name
};

/// SplitMix64: a tiny, fully specified generator (the same sequence everywhere).
class SplitMix64 {
 public:
  explicit SplitMix64(std::uint64_t seed) : state_(seed) {}
  std::uint64_t next() {
    std::uint64_t z = (state_ += 0x9E3779B97F4A7C15ULL);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
  }
  /// Uniform integer in [0, n), n > 0 (the modulo bias is irrelevant here).
  std::uint64_t below(std::uint64_t n) { return next() % n; }

 private:
  std::uint64_t state_;
};

/// A value in thousandths written exactly: 1234 → "1.234".
inline std::string thousandths(std::uint64_t milli) { return fmt::format("{}.{:03d}", milli / 1000, milli % 1000); }

/// Options of generate_grid.
struct GridOptions {
  std::size_t rows = 100;   ///< nodes per column
  std::size_t cols = 100;   ///< nodes per row
  std::uint64_t seed = 1;   ///< resistances vary in 0.5 .. 1.5 ohm with this seed
  bool uniform = false;     ///< every resistor 1 ohm instead (a hand-checkable grid)
  /// The source's waveform; a step after t = 0 keeps one switch configuration, so that the
  /// engine factors one matrix.
  std::string waveform = "step 1 V at 1 ms";
  std::string capacitance = "1 mF";
  /// Storage elements: C1 at the far corner, and C2 .. C{capacitors} from pseudo-random nodes
  /// to gnd (drawn from their own generator after the resistors, so that the text of a grid with
  /// one capacitor is unchanged).
  std::size_t capacitors = 1;
};

/// A rows × cols grid of nodes n{i}_{j} joined by resistors to their right and lower
/// neighbours; V1 holds the corner n0_0 against gnd and C1 sits from the opposite corner to
/// gnd. After the elimination of the two grounded ideal branches (mna.cpp) the nodal matrix is
/// the symmetric positive definite grid Laplacian with two Dirichlet nodes: CHOLMOD's path.
inline GeneratedNetwork generate_grid(const GridOptions& o) {
  GeneratedNetwork net;
  SplitMix64 rng(o.seed);
  fmt::memory_buffer out;
  fmt::format_to(std::back_inserter(out), "title \"resistive grid {} x {}\"\n", o.rows, o.cols);
  fmt::format_to(std::back_inserter(out), "V1: voltage-source n0_0 -> gnd, {}\n", o.waveform);
  fmt::format_to(std::back_inserter(out), "C1: capacitor n{}_{} -> gnd, {}\n", o.rows - 1, o.cols - 1,
                 o.capacitance);
  net.elements = 2;
  auto resistance = [&] { return o.uniform ? std::string("1") : thousandths(500 + rng.below(1001)); };
  std::size_t k = 0;
  for (std::size_t i = 0; i < o.rows; ++i)
    for (std::size_t j = 0; j < o.cols; ++j) {
      if (j + 1 < o.cols)
        fmt::format_to(std::back_inserter(out), "R{}: resistor n{}_{} -> n{}_{}, {} ohm\n", ++k, i, j, i, j + 1,
                       resistance());
      if (i + 1 < o.rows)
        fmt::format_to(std::back_inserter(out), "R{}: resistor n{}_{} -> n{}_{}, {} ohm\n", ++k, i, j, i + 1, j,
                       resistance());
    }
  net.elements += k;
  SplitMix64 place(o.seed ^ 0xC0FFEEULL);
  for (std::size_t c = 2; c <= o.capacitors; ++c) {
    const std::size_t node = place.below(o.rows * o.cols);
    fmt::format_to(std::back_inserter(out), "C{}: capacitor n{}_{} -> gnd, {} uF\n", c, node / o.cols, node % o.cols,
                   thousandths(100'000 + place.below(900'001)));
    ++net.elements;
  }
  net.nodes = o.rows * o.cols;
  net.source = "V1";
  net.storage = "C1";
  net.text = fmt::to_string(out);
  return net;
}

/// The side of the square grid closest to `nodes` nodes.
inline std::size_t grid_side_for(std::size_t nodes) {
  std::size_t s = 1;
  while ((s + 1) * (s + 1) <= nodes) ++s;
  if ((s + 1) * (s + 1) - nodes < nodes - s * s) ++s;
  return s;
}

/// Options of generate_ladder.
struct LadderOptions {
  std::size_t sections = 48;  ///< series/shunt sections: 2·sections resistors
  std::uint64_t seed = 2;     ///< series 0.05 .. 0.15 ohm, shunt 5 .. 15 kohm per section
  bool uniform = false;       ///< every series resistor 0.1 ohm, every shunt 10 kohm instead
  std::string waveform = "cosine 325 V 50 Hz phase 0 deg";
  std::string inductance = "100 mH";
  /// Extra lines appended (watch, sweep, window ...).
  std::string extra = "watch L1.i\n";
};

/// A cable or winding model: V1 feeds the ladder through K1 (closes at 0 s); section k has
/// a series resistor n{k−1} → n{k} and a shunt (insulation) resistor n{k} → gnd; the inductor
/// L1 is the load at the far end, n{sections} → gnd. 2·sections + 3 elements.
inline GeneratedNetwork generate_ladder(const LadderOptions& o) {
  GeneratedNetwork net;
  SplitMix64 rng(o.seed);
  fmt::memory_buffer out;
  fmt::format_to(std::back_inserter(out), "title \"ladder of {} sections\"\n", o.sections);
  fmt::format_to(std::back_inserter(out), "V1: voltage-source s -> gnd, {}\n", o.waveform);
  fmt::format_to(std::back_inserter(out), "K1: switch s -> n0, closes at 0 s\n");
  for (std::size_t k = 1; k <= o.sections; ++k) {
    std::string rs = o.uniform ? "0.1" : thousandths(50 + rng.below(101));
    std::string rp = o.uniform ? "10" : thousandths(5000 + rng.below(10001));
    fmt::format_to(std::back_inserter(out), "Rs{}: resistor n{} -> n{}, {} ohm\n", k, k - 1, k, rs);
    fmt::format_to(std::back_inserter(out), "Rp{}: resistor n{} -> gnd, {} kohm\n", k, k, rp);
  }
  fmt::format_to(std::back_inserter(out), "L1: inductor n{} -> gnd, {}\n", o.sections, o.inductance);
  out.append(o.extra);
  net.elements = 2 * o.sections + 3;
  net.nodes = o.sections + 2;
  net.source = "V1";
  net.storage = "L1";
  net.text = fmt::to_string(out);
  return net;
}

/// Options of generate_random.
struct RandomOptions {
  std::size_t nodes = 1000;   ///< nodes r0 .. r{nodes−1} (plus `in` and one per vcvs)
  std::uint64_t seed = 3;
  double extra_edges = 0.5;   ///< random resistors beyond the spanning tree, per node
  std::size_t per_kind = 0;   ///< vcvs, vccs and cccs each; 0 = max(1, nodes/50)
  std::string waveform = "dc 5 V + cosine 1 V 50 Hz";
};

/// A random connected resistive network (a random recursive spanning tree r_k → r_parent,
/// plus extra random resistors and a resistor to gnd from every 20th node) with controlled
/// sources of small gain, so that it stays well posed and stable:
/// - `E{k}: vcvs e{k} -> gnd, gain 0.2 .. 1.2, sense ra -> rb`, its output e{k} a node of its own
///   joined to the network by a 1 kohm resistor (no loop of ideal branches can form);
/// - `G{k}: vccs ra -> rb, gain 10 .. 110 uS, sense rc -> rd`;
/// - `F{k}: cccs ra -> rb, gain 0.01 .. 0.11, sense` a tree resistor.
/// V1 drives `in`, which K1 connects to r0 at t = 0 through its 50 ohm on-resistance; C1 sits
/// from r{nodes/2} to gnd. The matrix is unsymmetric: KLU's path.
inline GeneratedNetwork generate_random(const RandomOptions& o) {
  GeneratedNetwork net;
  SplitMix64 rng(o.seed);
  const std::size_t n = o.nodes < 4 ? 4 : o.nodes;
  const std::size_t per_kind = o.per_kind > 0 ? o.per_kind : (n / 50 > 0 ? n / 50 : 1);
  fmt::memory_buffer out;
  fmt::format_to(std::back_inserter(out), "title \"random network of {} nodes\"\n", n);
  fmt::format_to(std::back_inserter(out), "V1: voltage-source in -> gnd, {}\n", o.waveform);
  fmt::format_to(std::back_inserter(out), "K1: switch in -> r0, closes at 0 s, on 50 ohm\n");
  fmt::format_to(std::back_inserter(out), "C1: capacitor r{} -> gnd, 10 uF\n", n / 2);
  std::size_t elements = 3;
  auto ohms = [&] { return thousandths(100'000 + rng.below(900'001)); };  // 100 .. 1000 ohm
  auto node = [&] { return rng.below(n); };
  std::size_t r = 0;
  for (std::size_t k = 1; k < n; ++k)
    fmt::format_to(std::back_inserter(out), "R{}: resistor r{} -> r{}, {} ohm\n", ++r, k, node() % k, ohms());
  const std::size_t tree = r;
  const auto extra = static_cast<std::size_t>(o.extra_edges * static_cast<double>(n));
  for (std::size_t k = 0; k < extra; ++k) {
    std::size_t a = node(), b = node();
    if (a == b) b = (a + 1) % n;
    fmt::format_to(std::back_inserter(out), "R{}: resistor r{} -> r{}, {} ohm\n", ++r, a, b, ohms());
  }
  for (std::size_t k = 0; k < n; k += 20)
    fmt::format_to(std::back_inserter(out), "R{}: resistor r{} -> gnd, {} kohm\n", ++r, k,
                   thousandths(1000 + rng.below(9001)));
  elements += r;
  for (std::size_t k = 1; k <= per_kind; ++k) {
    std::size_t a = node(), b = node(), c = node();
    if (a == b) b = (a + 1) % n;  // a sense of a node against itself is an input error
    fmt::format_to(std::back_inserter(out), "E{}: vcvs e{} -> gnd, gain {}, sense r{} -> r{}\n", k, k,
                   thousandths(200 + rng.below(1001)), a, b);
    fmt::format_to(std::back_inserter(out), "Re{}: resistor e{} -> r{}, 1 kohm\n", k, k, c);
    std::size_t p = node(), q = node(), s = node(), t = node();
    if (p == q) q = (p + 1) % n;
    if (s == t) t = (s + 1) % n;
    fmt::format_to(std::back_inserter(out), "G{}: vccs r{} -> r{}, gain {} uS, sense r{} -> r{}\n", k, p, q,
                   thousandths(10'000 + rng.below(100'001)), s, t);
    std::size_t x = node(), y = node();
    if (x == y) y = (x + 1) % n;
    fmt::format_to(std::back_inserter(out), "F{}: cccs r{} -> r{}, gain {}, sense R{}\n", k, x, y,
                   thousandths(10 + rng.below(101)), 1 + rng.below(tree));
    elements += 4;
  }
  net.elements = elements;
  net.nodes = n + 1 + per_kind;
  net.source = "V1";
  net.storage = "C1";
  net.text = fmt::to_string(out);
  return net;
}

/// Options of generate_rlc_ladder.
struct RlcLadderOptions {
  std::size_t sections = 1;  ///< two storage elements per section
  std::uint64_t seed = 4;    ///< every value varies by up to ±25 % with this seed
  std::string waveform = "dc 48 V";
  /// Extra lines appended (watch, sweep, window ...); empty: watch L1.i and the last C.v.
  std::string extra;
};

/// A filter chain of `sections` LC sections with losses: V1 is closed onto it by K1 at 0 s;
/// section k has a series inductor L{k} n{k−1} → m{k} (about 10 µH) with its winding
/// resistance Rs{k} m{k} → n{k} (about 0.1 ohm), and a shunt capacitor C{k} n{k} → c{k}
/// (about 10 µF) with its ESR Re{k} c{k} → gnd (about 20 mohm); Rl, 10 ohm, loads the last node.
/// 2·sections states, 4·sections + 3 elements. Each section rings near 16 kHz; the spread of
/// values keeps the modes apart.
inline GeneratedNetwork generate_rlc_ladder(const RlcLadderOptions& o) {
  GeneratedNetwork net;
  SplitMix64 rng(o.seed);
  auto vary = [&](std::uint64_t nominal_milli) { return thousandths(nominal_milli * (750 + rng.below(501)) / 1000); };
  fmt::memory_buffer out;
  fmt::format_to(std::back_inserter(out), "title \"LC filter chain of {} sections\"\n", o.sections);
  fmt::format_to(std::back_inserter(out), "V1: voltage-source s -> gnd, {}\n", o.waveform);
  fmt::format_to(std::back_inserter(out), "K1: switch s -> n0, closes at 0 s\n");
  for (std::size_t k = 1; k <= o.sections; ++k) {
    fmt::format_to(std::back_inserter(out), "L{}: inductor n{} -> m{}, {} uH\n", k, k - 1, k, vary(10'000));
    fmt::format_to(std::back_inserter(out), "Rs{}: resistor m{} -> n{}, {} ohm\n", k, k, k, vary(100));
    fmt::format_to(std::back_inserter(out), "C{}: capacitor n{} -> c{}, {} uF\n", k, k, k, vary(10'000));
    fmt::format_to(std::back_inserter(out), "Re{}: resistor c{} -> gnd, {} mohm\n", k, k, vary(20'000));
  }
  fmt::format_to(std::back_inserter(out), "Rl: resistor n{} -> gnd, 10 ohm\n", o.sections);
  if (o.extra.empty())
    fmt::format_to(std::back_inserter(out), "watch L1.i, C{}.v\n", o.sections);
  else
    out.append(o.extra);
  net.elements = 4 * o.sections + 3;
  net.nodes = 3 * o.sections + 2;
  net.source = "V1";
  net.storage = "L1";
  net.text = fmt::to_string(out);
  return net;
}

}  // namespace netfold::bench
