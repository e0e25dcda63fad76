#pragma once
/// \file claims.hpp
/// Evaluating the `expect` lines of a circuit against its solution: every claim becomes a
/// result with the computed value, the margin and a message, never an exception and never
/// a NaN. A false claim is a result (exit 1 from `check`), not an error.
///
/// Example:
/// \code
///   netfold::Circuit c = netfold::parse_netlist_file("netlists/valve_coil.nf");
///   netfold::Solution s = netfold::solve(c);
///   for (const auto& r : netfold::evaluate_claims(c, s))
///     std::cout << (r.passed ? "PASS " : "FAIL ") << r.location() << ": " << r.text << " — " << r.message << '\n';
///   // PASS netlists/valve_coil.nf:12: tau = 6.67 ms ± 1% — computed 6.6667 ms, claimed 6.67 ms ± 1% (margin 63.37 µs)
/// \endcode

#include <optional>
#include <string>
#include <vector>

#include "netfold/netlist.hpp"
#include "netfold/solve.hpp"

namespace netfold {

/// The outcome of one `expect` line.
struct ClaimResult {
  std::string text;                 ///< the claim as written after `expect`
  std::string path;                 ///< the file of the claim
  SourceLoc loc;                    ///< position of `expect` in that file
  /// The computed quantity in SI units (phase in rad); ±∞ for an infinite τ or R_th;
  /// empty when it is undefined (no sinusoid for an amplitude, a failed solve).
  std::optional<double> computed;
  /// How far inside the claim the computed value is, in the quantity's unit (phase in rad):
  /// for `=`, tolerance − |computed − claimed|; for `<`/`<=`, claimed − computed; for
  /// `>`/`>=`, computed − claimed. Positive passes (zero passes `=`, `<=`, `>=`). Empty when
  /// the computed value is undefined; ±∞ when it is infinite.
  std::optional<double> margin;
  bool passed = false;
  /// "computed 6.6667 ms, claimed 6.67 ms ± 1% (margin 63.37 µs)", or why there is no value,
  /// with SI-prefixed numbers.
  std::string message;

  /// "FILE:LINE" of the claim.
  std::string location() const;
};

/// Evaluates every claim of `circuit` against `solution` (which must be the circuit's
/// nominal solution), in file order. The worst case over the declared sweeps is searched
/// only when some claim is a `worst peak`. Claims that cannot be evaluated (a segment beyond
/// the last, an undefined amplitude, `worst peak` without a sweep) are failed results whose
/// message says why.
std::vector<ClaimResult> evaluate_claims(const Circuit& circuit, const Solution& solution);

/// The claims and the ratings of a circuit, evaluated together so that one worst-case search
/// serves both.
struct CircuitVerdicts {
  std::vector<ClaimResult> claims;   ///< one per `expect` line, in file order
  std::vector<ClaimResult> ratings;  ///< one per rating attribute, in file order
};

/// Evaluates the claims (as evaluate_claims) and judges every rating (spec v2: every declared
/// rating is a case of `check`, failed when exceeded). A rating is judged at the worst case
/// over the declared sweeps, or at `solution` when there is none. A rating's result has the
/// text "K1 peak current", the position of the rating attribute, computed = the stress,
/// margin = rated − stress, and a message such as "computed 325.1 A > rated 100 A (325.1 %
/// used; at 5.1 ms; worst case at supply.phase = -87.3°)".
CircuitVerdicts evaluate_verdicts(const Circuit& circuit, const Solution& solution);

/// Every claim of `circuit` as a failed result with `reason` as its message, for a circuit
/// that does not solve.
std::vector<ClaimResult> unevaluated_claims(const Circuit& circuit, const std::string& reason);

/// Compares a computed value with a claim: fills computed, margin, passed and message of a
/// result. `computed` may be infinite; a NaN is treated as undefined. Phases (`claim.dimension`
/// is an angle) compare as angles: the difference is wrapped into (−180°, 180°].
ClaimResult compare_claim(const Claim& claim, const std::string& path, double computed);

/// The quantity a claim states, as text: "tau", "tau[2]", "peak @a", "@a at 5 ms",
/// "energy R1", "worst peak coil_l.i".
std::string claim_quantity_text(const Claim& claim, const Circuit& circuit);

}  // namespace netfold
