#include "report/explain_states.hpp"

#include <cmath>
#include <complex>
#include <numbers>

#include <fmt/format.h>
#include <fmt/ostream.h>
#include <fmt/ranges.h>

#include "netfold/units.hpp"
#include "reduce/state_space.hpp"
#include "response/terms.hpp"

namespace netfold::detail {

namespace {

std::string si(double v, std::string_view unit) { return format_si(v, unit, 4); }

// A coefficient of the characteristic polynomial in engineering notation: 1.2e3, 4e6, 250.
std::string number(double v) {
  if (v == 0.0) return "0";
  const double a = std::fabs(v);
  if (a >= 1e-2 && a < 1e3) return fmt::format("{:.4g}", v);
  const int e = static_cast<int>(std::floor(std::log10(a)));
  double m = v / std::pow(10.0, e);
  if (std::fabs(std::stod(fmt::format("{:.4g}", m))) >= 10.0) return number(std::copysign(10.0, m) * std::pow(10.0, e));
  return fmt::format("{:.4g}e{}", m, e);
}

std::string signed_part(double v, const std::string& what) {
  if (v == 0.0) return "";
  return fmt::format(" {} {}{}", v < 0.0 ? "−" : "+", number(std::fabs(v)), what);
}

std::string root_text(std::complex<double> lambda) {
  if (lambda.imag() == 0.0) return fmt::format("{} 1/s", number(lambda.real()));
  return fmt::format("{} ± j{} 1/s", number(lambda.real()), number(std::fabs(lambda.imag())));
}

std::string mode_text(const NaturalMode& m) {
  const std::string tau = std::isinf(m.tau) ? std::string("∞") : si(m.tau, "s");
  if (m.oscillatory)
    return fmt::format("s = {}: f_d = {}, f_n = {}, ζ = {:.4g}, τ = 1/α = {}", root_text(m.eigenvalue),
                       si(m.frequency, "Hz"), si(m.natural_frequency, "Hz"), m.damping, tau);
  return fmt::format("s = {}{}: τ = −1/s = {}", root_text(m.eigenvalue),
                     m.multiplicity > 1 ? fmt::format(" (×{})", m.multiplicity) : "", tau);
}

std::string state_name(const Element& e) {
  return fmt::format("{}.{}", e.name, e.kind == ElementKind::capacitor ? "v" : "i");
}

void write_two_states(std::ostream& out, const Eigen::MatrixXd& a, const Segment& s) {
  const double trace = a.trace(), det = a.determinant();
  fmt::print(out, "    b. characteristic equation det(sI − A) = s² − tr(A)·s + det(A) = 0, tr(A) = {} 1/s, "
                  "det(A) = {} 1/s²:\n",
             number(trace), number(det));
  fmt::print(out, "       s² + 2ζω_n·s + ω_n² = 0 → {} = 0\n", quadratic_text(trace, det));
  if (det > 0.0) {
    const double wn = std::sqrt(det);
    fmt::print(out, "       ω_n = √det(A) = {} rad/s (f_n = {}), ζ = −tr(A)/(2ω_n) = {:.4g}\n", number(wn),
               si(wn / (2.0 * std::numbers::pi), "Hz"), -trace / (2.0 * wn));
  }
  fmt::print(out, "    c. roots (the natural modes):\n");
  for (const NaturalMode& m : s.modes) fmt::print(out, "       {}\n", mode_text(m));
}

}  // namespace

std::string quadratic_text(double trace, double det) {
  return fmt::format("s²{}{}", signed_part(-trace, "·s"), signed_part(det, ""));
}

void write_event_explanation(std::ostream& out) {
  fmt::print(out,
             "  4. Diodes and contacts at a zero: each segment is one configuration (which contacts are\n"
             "     closed, which diodes conduct: a conducting diode is its forward drop plus its 'on'\n"
             "     resistance, a blocking one its 'off' resistance). The segment ends at the first root of\n"
             "     its own closed form: a conducting diode's current falling to zero, a blocking diode's\n"
             "     voltage reaching its drop or breakdown, a contact's current or voltage at zero, found\n"
             "     by bracketing on the closed form and bisection to the last bit of t. The next\n"
             "     configuration is the consistent one: every conducting diode's current >= 0, every\n"
             "     blocking diode's voltage within its blocking range.\n");
}

void write_states_explanation(std::ostream& out, const Solution& sol, const TermsWriter& terms_text) {
  const Circuit& c = sol.circuit();
  const auto& ids = sol.storage_elements();
  std::vector<std::string> list, names, starts;
  for (std::size_t k = 0; k < ids.size(); ++k) {
    const Element& e = c.element(ids[k]);
    const bool cap = e.kind == ElementKind::capacitor;
    list.push_back(fmt::format("{} ({} = {})", e.name, cap ? "C" : "L", si(e.value, cap ? "F" : "H")));
    names.push_back(state_name(e));
    starts.push_back(fmt::format("{}(0-) = {}", state_name(e), si(sol.initial_states()[k], cap ? "V" : "A")));
  }
  fmt::print(out, "  1. The storage elements are {}:\n"
                  "     {} states x = ({}). Within a segment the rest of the network is resistive, so each\n"
                  "     capacitor is replaced by a voltage source holding its voltage and each inductor by a\n"
                  "     current source driving its current, and the MNA equations G·x = B·u are solved once\n"
                  "     for every input (each state and each source).\n",
             fmt::join(list, ", "), ids.size(), fmt::join(names, ", "));
  fmt::print(out, "  2. Each element's port quantity is then a linear function of the states and the sources:\n"
                  "     C·dv/dt = i_C and L·di/dt = v_L give the state equation dx/dt = A·x + B·u(t).\n");
  fmt::print(out, "  3. State at t = 0-: {}; every state is continuous across every event.\n", fmt::join(starts, ", "));
  if (sol.event_driven()) write_event_explanation(out);
  // Hundreds of diode segments repeat a few configurations: the first ones tell the story.
  constexpr std::size_t kShownSegments = 12;
  for (std::size_t k = 0; k < sol.segments().size(); ++k) {
    const Segment& s = sol.segments()[k];
    if (k == kShownSegments) {
      fmt::print(out, "\n  … {} more segments, each derived in the same way in its own configuration\n",
                 sol.segments().size() - k);
      break;
    }
    fmt::print(out, "\n  segment {}: {} .. {}{}{}\n", s.number, si(s.from, "s"), si(s.to, "s"),
               sol.event_driven() ? ", " : "", sol.event_driven() ? configuration_text(c, s.positions) : "");
    if (sol.event_driven() && k + 1 < sol.segments().size())
      fmt::print(out, "    ended by: {}\n", fmt::join(sol.segments()[k + 1].changes, ", "));
    const StateSpace ss = state_space(c, sol.network(s));
    const Eigen::MatrixXd& a = ss.a;
    if (a.rows() <= 4) {
      fmt::print(out, "    a. A (1/s, rows d/dt of {}):\n", fmt::join(names, ", "));
      for (Eigen::Index i = 0; i < a.rows(); ++i) {
        std::vector<std::string> row;
        for (Eigen::Index j = 0; j < a.cols(); ++j) row.push_back(fmt::format("{:>10}", number(a(i, j))));
        fmt::print(out, "       [{}]\n", fmt::join(row, " "));
      }
    } else {
      fmt::print(out, "    a. A is {}×{} (1/s)\n", a.rows(), a.cols());
    }
    if (a.rows() == 2) {
      write_two_states(out, a, s);
    } else {
      fmt::print(out, "    b. the natural modes, the roots of det(sI − A) = 0 (eigenvalues of A, slowest first):\n");
      for (const NaturalMode& m : s.modes) fmt::print(out, "       {}\n", mode_text(m));
    }
    fmt::print(out, "    {}. every observable is its forced response (DC and each phasor through (jωI − A)⁻¹·B)\n"
                    "       plus one term per mode, with t' = t − {}:\n",
               a.rows() == 2 ? 'd' : 'c', si(s.from, "s"));
    for (const auto& obs : sol.observables()) {
      const Piece p = sol.piece(obs, s);
      if (!p.has_terms()) continue;
      const std::string unit(dimension_symbol(obs.dimension()));
      if (p.terms_g)
        fmt::print(out, "       {}(t) = [{}]·[{}]\n", obs.text, terms_text(*p.terms_f, "V"), terms_text(*p.terms_g, "A"));
      else
        fmt::print(out, "       {}(t) = {}\n", obs.text, terms_text(*p.terms_f, unit));
    }
  }
}

}  // namespace netfold::detail
