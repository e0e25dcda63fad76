// Issue 7, target 2: parsing plus assembly of a 10^6-element file should cost a small multiple
// of reading the file. For grids of about 10^5 and 10^6 elements written to the scratch
// directory (bench_common.hpp, scratch_dir):
//   read/…          the file into a std::string (from the page cache: a memory copy)
//   scan/…          one pass over the text counting lines and fields: a floor for any parser
//   parse_text/…    parse_netlist on the text in memory
//   parse_file/…    parse_netlist_file: read and parse, what `netfold solve` does
//   build/…         build_nodal_system on the parsed circuit (assembly of G and B)
// The summary gives (parse_file + build) / read, and each stage's share.
#include "bench_common.hpp"
#include "netfold/mna.hpp"
#include "network_generator.hpp"

namespace {

using namespace netfold;
using namespace netfold::bench;

// Grid sides giving about 10^5 and 10^6 elements (2·s·(s − 1) resistors plus V1 and C1).
const std::vector<std::pair<std::size_t, std::size_t>> kCases = {{100'000, 224}, {1'000'000, 707}};

struct ParseCase {
  std::filesystem::path path;
  std::string text;
  std::size_t elements = 0;
  std::unique_ptr<Circuit> circuit;
};

ParseCase& parse_case(std::size_t elements) {
  static std::map<std::size_t, std::unique_ptr<ParseCase>> cases;
  auto& slot = cases[elements];
  if (!slot) {
    slot = std::make_unique<ParseCase>();
    std::size_t side = 0;
    for (auto [e, s] : kCases)
      if (e == elements) side = s;
    GridOptions o;
    o.rows = o.cols = side;
    GeneratedNetwork net = generate_grid(o);
    slot->elements = net.elements;
    slot->path = scratch_dir() / fmt::format("parse_grid_{}.nf", elements);
    write_file(slot->path, net.text);
    slot->text = std::move(net.text);
    slot->circuit = std::make_unique<Circuit>(parse_netlist(slot->text, slot->path.string()));
  }
  return *slot;
}

std::string read_whole(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::string s(std::filesystem::file_size(path), '\0');
  in.read(s.data(), static_cast<std::streamsize>(s.size()));
  return s;
}

std::string name(const char* what, std::size_t elements) { return fmt::format("{}/elements_{}", what, elements); }

void register_all() {
  for (auto [elements, side] : kCases) {
    const std::size_t n = elements;
    auto reg = [&](const char* what, auto body) {
      benchmark::RegisterBenchmark(name(what, n).c_str(), body)
          ->Unit(benchmark::kMillisecond)
          ->MinTime(0.2)
          ->Repetitions(5)
          ->UseRealTime();
    };
    reg("read", [n](benchmark::State& state) {
      ParseCase& c = parse_case(n);
      for (auto _ : state) {
        std::string s = read_whole(c.path);
        benchmark::DoNotOptimize(s.data());
      }
      state.SetBytesProcessed(static_cast<std::int64_t>(state.iterations()) *
                              static_cast<std::int64_t>(c.text.size()));
    });
    reg("scan", [n](benchmark::State& state) {
      ParseCase& c = parse_case(n);
      for (auto _ : state) {
        std::size_t lines = 0, fields = 0;
        bool in_field = false;
        for (char ch : c.text) {
          const bool space = ch == ' ' || ch == '\n' || ch == ',' || ch == '\t';
          fields += !space && !in_field;
          in_field = !space;
          lines += ch == '\n';
        }
        benchmark::DoNotOptimize(lines + fields);
      }
    });
    reg("parse_text", [n](benchmark::State& state) {
      ParseCase& c = parse_case(n);
      for (auto _ : state) {
        Circuit circuit = parse_netlist(c.text, "grid.nf");
        benchmark::DoNotOptimize(circuit.elements().size());
      }
      state.counters["elements"] = static_cast<double>(c.elements);
    });
    reg("parse_file", [n](benchmark::State& state) {
      ParseCase& c = parse_case(n);
      for (auto _ : state) {
        Circuit circuit = parse_netlist_file(c.path);
        benchmark::DoNotOptimize(circuit.elements().size());
      }
    });
    reg("build", [n](benchmark::State& state) {
      ParseCase& c = parse_case(n);
      for (auto _ : state) {
        NodalSystem sys = build_nodal_system(*c.circuit, positions_before_zero(*c.circuit));
        benchmark::DoNotOptimize(sys.matrix().nonZeros());
      }
    });
  }
}

void summarize(const Timings& t, Summary& s) {
  for (auto [n, side] : kCases) {
    const double read = t.seconds(name("read", n)), parse = t.seconds(name("parse_file", n)),
                 build = t.seconds(name("build", n));
    if (std::isnan(read) || std::isnan(parse) || std::isnan(build)) continue;
    s.multiple(fmt::format("(2) {} elements: parse_netlist_file + build_nodal_system / read the file", n),
               parse + build, read, 0, "target: 'a small multiple'");
    s.multiple(fmt::format("    {} elements: parse_text / read", n), t.seconds(name("parse_text", n)), read, 0,
               "the parser alone");
    s.multiple(fmt::format("    {} elements: build_nodal_system / read", n), build, read, 0, "assembly alone");
    s.multiple(fmt::format("    {} elements: one scan of the text / read", n), t.seconds(name("scan", n)), read, 0,
               "a floor for any parser");
    s.figure(fmt::format("    {} elements: parse_netlist_file per element", n), parse / static_cast<double>(n) * 1e9,
             "ns", 0, "");
  }
}

}  // namespace

int main(int argc, char** argv) {
  register_all();
  return netfold::bench::run_benchmarks(argc, argv, summarize);
}
