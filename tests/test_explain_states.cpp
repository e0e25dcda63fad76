// Tests of `solve --explain` with several storage elements: the characteristic equation of two
// states with its numbers, its roots, and the modes of more states, against textbook circuits.
#include <cmath>
#include <regex>
#include <sstream>
#include <string>
#include <vector>

#include "engine_helpers.hpp"
#include "netfold/report.hpp"

using namespace netfold;
using namespace netfold::testing;

namespace {

std::string explanation(const std::string& text) {
  auto s = solve_text(text);
  std::ostringstream out;
  write_explanation(out, *s.solution);
  return out.str();
}

// The number after `label` on the explanation's text, "1.2e3" or "0.1" alike.
double number_after(const std::string& text, const std::string& label) {
  const auto at = text.find(label);
  REQUIRE(at != std::string::npos);
  return std::stod(text.substr(at + label.size()));
}

}  // namespace

TEST_CASE("explain gives a series RLC's characteristic equation s^2 + (R/L)s + 1/(LC) = 0 with its numbers",
          "[report]") {
  // Source: series RLC (textbook, from memory): L·di/dt + R·i + v_C = V, C·dv_C/dt = i, so
  // det(sI − A) = s² + (R/L)·s + 1/(LC); here R/L = 2e4 1/s and 1/(LC) = 1e10 1/s², ω_n = 1e5 rad/s,
  // ζ = (R/2)·√(C/L) = 0.1, roots −ζω_n ± jω_n·√(1 − ζ²) = −1e4 ± j9.950e4 1/s.
  const std::string text = explanation(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 20 ohm\nL1: inductor c -> d, 1 mH\nC1: capacitor d -> gnd, 100 nF\n");
  INFO(text);
  CHECK(text.find("s² + 2ζω_n·s + ω_n² = 0 → s² + 2e4·s + 1e10 = 0") != std::string::npos);
  CHECK(number_after(text, ", tr(A) = ") == Approx(-2e4).epsilon(1e-4));
  CHECK(number_after(text, ", det(A) = ") == Approx(1e10).epsilon(1e-4));
  CHECK(number_after(text, "ω_n = √det(A) = ") == Approx(1e5).epsilon(1e-4));
  CHECK(number_after(text, "ζ = −tr(A)/(2ω_n) = ") == Approx(0.1).epsilon(1e-4));
  CHECK(text.find("s = -1e4 ± j9.95e4 1/s") != std::string::npos);
  // The closed form of the watched state follows.
  CHECK(text.find("C1.v(t) = 10 V") != std::string::npos);
}

TEST_CASE("explain gives an overdamped series RLC two real roots (R/L ± sqrt((R/L)^2 - 4/(LC)))/2", "[report]") {
  // Source: the same characteristic equation (textbook): R = 1 kohm, L = 1 mH, C = 100 nF give
  // s² + 1e6·s + 1e10 = 0, roots s = (−1e6 ± √(1e12 − 4e10))/2 = −1.0102e4 and −9.899e5 1/s.
  const std::string text = explanation(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 1 kohm\nL1: inductor c -> d, 1 mH\nC1: capacitor d -> gnd, 100 nF\n");
  INFO(text);
  CHECK(text.find("→ s² + 1e6·s + 1e10 = 0") != std::string::npos);
  const double slow = (-1e6 + std::sqrt(1e12 - 4e10)) / 2, fast = (-1e6 - std::sqrt(1e12 - 4e10)) / 2;
  const std::regex root(R"(\n +s = (-[0-9.e]+) 1/s: τ)");
  std::vector<double> roots;
  for (std::sregex_iterator it(text.begin(), text.end(), root), end; it != end; ++it) roots.push_back(std::stod((*it)[1]));
  REQUIRE(roots.size() == 2);
  CHECK(roots[0] == Approx(slow).epsilon(1e-3));
  CHECK(roots[1] == Approx(fast).epsilon(1e-3));
}

TEST_CASE("explain lists the modes of three storage elements as the roots of det(sI - A)", "[report]") {
  // Source: an RC low-pass behind a series RLC (textbook cascade, from memory): the RC stage
  // alone, 10 kohm and 10 nF behind a stiff node, has its pole at −1/(RC) = −1e4 1/s; loaded
  // only lightly by it, the RLC keeps a pair near ω_n = 1e5 rad/s. Three states, three roots.
  const std::string text = explanation(
      "V1: voltage-source a -> gnd, dc 10 V\nK1: switch a -> b, closes at 0 s\n"
      "R1: resistor b -> c, 20 ohm\nL1: inductor c -> d, 1 mH\nC1: capacitor d -> gnd, 100 nF\n"
      "R2: resistor d -> e, 10 kohm\nC2: capacitor e -> gnd, 10 nF\n");
  INFO(text);
  CHECK(text.find("b. the natural modes, the roots of det(sI − A) = 0") != std::string::npos);
  CHECK(text.find("characteristic equation") == std::string::npos);
  const std::regex real_root(R"(s = (-[0-9.e]+) 1/s: τ)"), pair(R"(s = -[0-9.e]+ ± j([0-9.e]+) 1/s: f_d)");
  std::smatch m;
  REQUIRE(std::regex_search(text, m, real_root));
  CHECK(std::stod(m[1]) == Approx(-1e4).epsilon(0.15));
  REQUIRE(std::regex_search(text, m, pair));
  CHECK(std::stod(m[1]) == Approx(1e5).epsilon(0.15));
}
