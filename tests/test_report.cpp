// Tests of the report stage: numbers as printed, CSV rows, JSON fields, output files.
#include <cmath>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>

#include <nlohmann/json.hpp>

#include "engine_helpers.hpp"
#include "temp_dir.hpp"
#include "netfold/report.hpp"
#include "netfold/units.hpp"

using namespace netfold;
using namespace netfold::testing;

TEST_CASE("format_si writes engineering notation with an SI prefix and 4 significant digits", "[report]") {
  CHECK(format_si(0.0066666667, "s") == "6.667 ms");
  CHECK(format_si(4700.0, "Ω") == "4.7 kΩ");
  CHECK(format_si(-0.0003501, "A") == "-350.1 µA");
  CHECK(format_si(999.96e-6, "s") == "1 ms");  // rounding carries into the next prefix
  CHECK(format_si(0.0, "V") == "0 V");
  CHECK(format_si(-75.1439, "°") == "-75.14°");
  CHECK(format_si(0.01121, "A²s") == "0.01121 A²s");  // never "11.21 mA²s", which would read as (mA)²s
  CHECK(format_si(kInfinity, "Ω") == "∞ Ω");
  CHECK(format_si(1.5e-18, "F") == "1.5e-18 F");  // below femto: plain scientific
}

TEST_CASE("a wave prints as its closed form with every number substituted", "[report]") {
  auto s = solve_text(
      "V1: voltage-source a -> gnd, step 10 V at 0 s\nR1: resistor a -> b, 1 kohm\nC1: capacitor b -> gnd, 1 uF\n"
      "window 0 .. 5 ms\n");
  CHECK(wave_expression(s->segments().front().state, "V") == "10 V - 10 V·e^(-t/1 ms)");
}

namespace {

// Every SI-formatted number of one line of the observable table, back in SI units.
std::vector<double> numbers_of(const std::string& line, const std::vector<std::string>& units) {
  std::vector<double> out;
  std::istringstream in(line);
  std::vector<std::string> words{std::istream_iterator<std::string>(in), std::istream_iterator<std::string>()};
  for (std::size_t k = 0; k + 1 < words.size(); ++k) {
    for (const auto& unit : units) {
      const std::string& w = words[k + 1];
      if (w.size() < unit.size() || w.compare(w.size() - unit.size(), unit.size(), unit) != 0) continue;
      std::string prefix = w.substr(0, w.size() - unit.size());
      if (prefix.size() > 2) continue;
      auto suffix = parse_unit_suffix(prefix);
      if (!suffix || suffix->dimension) continue;
      try {
        out.push_back(std::stod(words[k]) * suffix->multiplier);
      } catch (...) {
      }
      break;
    }
  }
  return out;
}

}  // namespace

TEST_CASE("every figure the text report prints equals the computed one, in every example", "[report]") {
  // The printed table (peak, time, max, min, final) must be the JSON's numbers rounded to 4
  // significant digits: the text is a faithful view of what is computed and cross-checked.
  int files = 0;
  for (const auto& entry : std::filesystem::directory_iterator(NETFOLD_SOURCE_DIR "/netlists")) {
    if (entry.path().extension() != ".nf") continue;
    INFO(entry.path());
    Circuit c = parse_netlist_file(entry.path());
    Solution s = solve(c);
    SolveReport r = build_solve_report(s);
    std::ostringstream text;
    write_solve_text(text, r);
    auto json = nlohmann::json::parse(solve_json(r));
    std::string line;
    std::istringstream lines(text.str());
    int rows = 0;
    while (std::getline(lines, line)) {
      for (std::size_t i = 0; i < s.observables().size(); ++i) {
        const auto& obs = s.observables()[i];
        if (line.rfind(obs.text + " ", 0) != 0 || line.find("(t) =") != std::string::npos) continue;
        std::string unit(dimension_symbol(obs.dimension()));
        std::vector<double> n = numbers_of(line.substr(obs.text.size()), {unit, "s"});
        REQUIRE(n.size() >= 5);
        const auto& f = json["observables"][obs.text];
        double scale = f["peak"].get<double>();
        double expected[] = {f["peak"], f["t_peak"], f["max"], f["min"], f["final"]};
        for (int k = 0; k < 5; ++k) {
          double e = expected[k];
          double tol = 5e-4 * std::fabs(e) + (k == 1 ? 0.0 : 1e-10 * scale);
          INFO(obs.text << " column " << k << ": printed " << n[static_cast<std::size_t>(k)] << ", computed " << e);
          CHECK(std::fabs(n[static_cast<std::size_t>(k)] - e) <= tol + 1e-300);
        }
        ++rows;
      }
    }
    CHECK(rows == static_cast<int>(s.observables().size()));
    ++files;
  }
  CHECK(files >= 6);
}

TEST_CASE("the CSV has a row per resolution step, full precision, and takes the value after an event", "[report]") {
  auto s = solve_text(
      "V1: voltage-source a -> gnd, dc 5 V\nK1: switch a -> b, closes at 0 s, opens at 1 ms\nR1: resistor b -> c, 1 kohm\n"
      "C1: capacitor c -> gnd, 1 uF, initial 0 V\nR2: resistor c -> gnd, 1 kohm\nwindow 0 .. 2 ms\nresolution 0.5 ms\n"
      "watch C1.i, @c\n");
  std::string csv = waveform_csv(*s);
  std::istringstream in(csv);
  std::string header, row;
  std::getline(in, header);
  CHECK(header == "t,C1.i,@c");
  std::vector<std::vector<double>> rows;
  while (std::getline(in, row)) {
    std::vector<double> v;
    std::stringstream cells(row);
    std::string cell;
    while (std::getline(cells, cell, ',')) v.push_back(std::stod(cell));
    rows.push_back(v);
  }
  REQUIRE(rows.size() == 5);
  for (std::size_t k = 0; k < rows.size(); ++k) CHECK(rows[k][0] == 0.5e-3 * static_cast<double>(k));
  // At 1 ms the contact has just opened: the capacitor discharges through R2 alone,
  // i = −v/R2, not the charging current of the moment before.
  double v_at_1ms = rows[2][2];
  CHECK_REL(rows[2][1], -v_at_1ms / 1000.0, 1e-12);
  // Full precision: the value parses back to the exact double the engine computes.
  CHECK(rows[3][2] == s->value(observable(s, "@c"), 1.5e-3));
}

TEST_CASE("the JSON carries the spec's fields, with null for an infinite time constant", "[report]") {
  auto s = solve_text("I1: current-source gnd -> a, dc 1 mA\nC1: capacitor a -> gnd, 1 uF, rated 50 V\nwindow 0 .. 10 ms\n");
  SolveReport r = build_solve_report(*s);
  auto j = nlohmann::json::parse(solve_json(r));
  for (const char* key : {"title", "storage", "segments", "observables", "ratings", "verification", "warnings"})
    CHECK(j.contains(key));
  CHECK(j["storage"]["unit"] == "F");
  CHECK(j["segments"][0]["tau"].is_null());
  CHECK(j["segments"][0]["rth"].is_null());
  CHECK(j["segments"][0]["vth_dc"].is_null());  // R_th = ∞: only the Norton current is defined
  CHECK_REL(j["segments"][0]["isc_dc"].get<double>(), 1e-3, 1e-12);
  CHECK_REL(j["observables"]["C1.v"]["peak"].get<double>(), 1e-3 * 10e-3 / 1e-6, 1e-12);
  CHECK(j["observables"]["C1.v"]["steady_amplitude"].is_null());  // a ramp has no steady state
  CHECK_REL(j["ratings"][0]["used_percent"].get<double>(), 100.0 * 10.0 / 50.0, 1e-9);
}

TEST_CASE("a circuit above 50 V AC carries the caution in text and JSON; a 24 V DC one does not", "[report]") {
  auto mains = solve_text("V1: voltage-source a -> gnd, cosine 230 Vrms 50 Hz\nR1: resistor a -> b, 1 kohm\nC1: capacitor b -> gnd, 1 uF\n");
  SolveReport r = build_solve_report(*mains);
  CHECK(r.hazardous);
  std::ostringstream text;
  write_solve_text(text, r);
  CHECK(text.str().find("qualified persons") != std::string::npos);
  CHECK(solve_json(r).find("qualified persons") != std::string::npos);
  auto low = solve_text("V1: voltage-source a -> gnd, dc 24 V\nR1: resistor a -> b, 1 kohm\nC1: capacitor b -> gnd, 1 uF\n");
  CHECK_FALSE(build_solve_report(*low).hazardous);
  // A 24 V relay coil whose flyback spikes past 120 V is hazardous too.
  auto spike = solve_text(
      "V1: voltage-source a -> gnd, dc 24 V\nK1: switch a -> b, opens at 1 ms\nR1: resistor b -> c, 100 ohm\n"
      "L1: inductor c -> gnd, 1 H\nRf: resistor b -> gnd, 10 kohm\nwatch @b\n");
  CHECK(build_solve_report(*spike).hazardous);
}

TEST_CASE("an output file is written whole or not at all", "[report]") {
  netfold_test::TempDir scratch("report");
  const auto& dir = scratch.path();
  std::ostringstream sink;
  write_output((dir / "out.csv").string(), "t,x\n0,1\n", sink);
  std::ifstream f(dir / "out.csv");
  std::string content((std::istreambuf_iterator<char>(f)), std::istreambuf_iterator<char>());
  CHECK(content == "t,x\n0,1\n");
  int leftovers = 0;
  for (const auto& e : std::filesystem::directory_iterator(dir)) leftovers += e.path().filename() != "out.csv";
  CHECK(leftovers == 0);
  CHECK_THROWS_AS(write_output("/nonexistent/dir/out.csv", "x", sink), InputError);
  CHECK_FALSE(std::filesystem::exists("/nonexistent/dir/out.csv"));
  write_output("-", "to the stream", sink);
  CHECK(sink.str() == "to the stream");
}
