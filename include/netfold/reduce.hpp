#pragma once
/// \file reduce.hpp
/// Stage 3 of the pipeline: each switch configuration's MNA system factored once and solved
/// for every input at once, X = G⁻¹·B, so that any voltage or current of that configuration
/// is an exact linear function y = Σ_j c_j·u_j of the state u_0 and the sources u_1…; and
/// from it the Thevenin and Norton equivalent that the storage element (or any port) sees.
///
/// The Thevenin resistance comes from the state itself used as a test source: for a
/// capacitor, i_C = c_0·v_C + Σ c_j·u_j, so R_th = −1/c_0 and v_oc = −Σ c_j·u_j / c_0; for an
/// inductor, v_L = c_0·i_L + Σ c_j·u_j, so R_th = −c_0 and v_oc = Σ c_j·u_j. Controlled
/// sources are therefore handled exactly, with no series/parallel shortcuts.

#include <memory>
#include <optional>
#include <unordered_map>
#include <vector>

#include "netfold/mna.hpp"

namespace netfold {

class LinearSolver;

/// One configuration, solved for every input.
class ReducedNetwork {
 public:
  ReducedNetwork(const Circuit& circuit, const SwitchPositions& positions, const BuildOptions& options = {});
  const NodalSystem& system() const { return system_; }
  /// c such that the form's value is Σ_j c_j·u_j, one entry per input.
  std::vector<double> coefficients(const LinearForm& form) const;
  /// Σ|terms| that made each coefficient: a coefficient far below its magnitude is what is
  /// left of a cancellation, zero up to rounding (relative error ~1e-16·magnitude/|c|).
  std::vector<double> magnitudes(const LinearForm& form) const;
  /// True when `coefficient` (the form's coefficient of input `input`) is what rounding leaves
  /// of a cancellation, that is zero: below the error estimate of the refined solve times the
  /// magnitude of the terms that made it (kCancellation of it where the solve was not refined).
  bool negligible(const LinearForm& form, std::uint32_t input, double coefficient) const;
  /// Reciprocal condition estimate of the equilibrated nodal matrix (0 = singular).
  double rcond() const { return rcond_; }
  /// Factorization used ("dense LU", "sparse LDLT" or "KLU").
  const char* solver_name() const { return solver_name_; }
  /// Unknowns that take part in a near-null vector of G (empty unless singular and small).
  const std::vector<std::uint32_t>& singular_unknowns() const { return singular_unknowns_; }

 private:
  NodalSystem system_;
  Eigen::MatrixXd response_;  // X = G⁻¹·B: unknowns × inputs
  Eigen::MatrixXd response_lo_;          // the refined remainder: X ≈ response_ + response_lo_
  std::vector<double> refined_error_;    // per input: relative size of the last correction
  Eigen::MatrixXd perturbed_, perturbed_lo_;  // X of the network with every stamp moved by ±4ε
  void refine_response(const LinearSolver& solver);
  void estimate_value_noise();
  std::vector<double> refined_coefficients(const LinearForm& form, const Eigen::MatrixXd& x,
                                           const Eigen::MatrixXd& x_lo) const;
  double rcond_ = 1.0;
  const char* solver_name_ = "dense LU";
  std::vector<std::uint32_t> singular_unknowns_;
};

/// Below this reciprocal condition estimate the equations are treated as singular.
inline constexpr double kSingularRcond = 1e-14;
/// A coefficient below this share of its magnitude is a cancellation to zero (networks too
/// large to refine; see ReducedNetwork::negligible).
inline constexpr double kCancellation = 1e-12;
/// X = G⁻¹B is refined to about double-double accuracy while stamps × inputs stay below this
/// (the 10⁶-node grids of the benchmarks keep the plain solve).
inline constexpr double kRefinementWorkLimit = 2e7;
/// Relative rounding of the element values themselves (4ε): what a refined coefficient cannot
/// resolve. With resistances spanning at most 10¹³ (kMaxResistanceSpan), a real coefficient is
/// at least ~10⁻¹³ of its terms, well above it.
inline constexpr double kValueRounding = 8.9e-16;

/// A Thevenin/Norton equivalent: v_oc and i_sc as linear combinations of the inputs
/// (entry 0, the state, is 0 for the storage element's own equivalent).
struct Equivalent {
  double rth = 0.0;               ///< ohm; kInfinity (open) and 0 (short) are allowed
  std::vector<double> voc;        ///< v_oc = Σ voc[j]·u_j (V), empty when R_th = 0 and undefined
  std::vector<double> isc;        ///< i_sc = Σ isc[j]·u_j (A), empty when R_th = ∞ and undefined
  /// For the storage element: the state-equation coefficient a in dx/dt = a·x + …, 1/s.
  double rate = 0.0;
};

/// The equivalent the storage element sees in `network`; `port` is the storage element.
/// Capacitor: C·dv/dt = (v_oc − v)/R_th; inductor: L·di/dt = v_oc − R_th·i.
Equivalent storage_equivalent(const Circuit& circuit, const ReducedNetwork& network, ElementId storage);

/// Caches ReducedNetworks by configuration, so that repeated solves (sweeps) factor each
/// configuration once. Not thread-safe; one per thread.
class NetworkCache {
 public:
  explicit NetworkCache(const Circuit& circuit)
      : circuit_(&circuit), state_count_(circuit.storage_elements().size()) {}
  /// The configuration with every storage element in `mode`.
  const ReducedNetwork& get(const SwitchPositions& positions, PortMode mode = PortMode::port);
  /// The configuration with a mode per storage element (file order).
  const ReducedNetwork& get(const SwitchPositions& positions, const std::vector<PortMode>& modes);
  const Circuit& circuit() const { return *circuit_; }

 private:
  const Circuit* circuit_;
  std::size_t state_count_ = 0;
  // Keyed by the switch positions and the port mode. A hash map: a sequence of many events
  // has as many configurations, and a linear search made building a solution quadratic in
  // them (each segment keeps a pointer to its network afterwards; see Segment::network).
  struct Key {
    std::vector<bool> closed;
    std::vector<DiodeState> diodes;
    std::vector<PortMode> modes;
    bool operator==(const Key& other) const {
      return modes == other.modes && closed == other.closed && diodes == other.diodes;
    }
  };
  struct KeyHash {
    std::size_t operator()(const Key& k) const {
      std::size_t h = std::hash<std::vector<bool>>{}(k.closed);
      for (PortMode m : k.modes) h = h * 31 + static_cast<std::size_t>(m);
      for (DiodeState d : k.diodes) h = h * 7 + static_cast<std::size_t>(d);
      return h;
    }
  };
  std::unordered_map<Key, std::unique_ptr<ReducedNetwork>, KeyHash> networks_;
};

}  // namespace netfold
