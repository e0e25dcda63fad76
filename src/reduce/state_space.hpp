#pragma once
// The state equation of one configuration, dx/dt = A·x + B·u, from its reduced network: every
// storage element is a port of the resistive network (reduce.hpp), so C_i·dv_i/dt = i_Ci and
// L_i·di_i/dt = v_Li are exact linear functions of the states and the sources. Private to the
// library (Eigen types).

#include <vector>

#include <Eigen/Dense>

#include "netfold/reduce.hpp"

namespace netfold {

/// dx/dt = A·x + B·u of one configuration.
struct StateSpace {
  Eigen::MatrixXd a;             ///< n×n, 1/s
  Eigen::MatrixXd b;             ///< n×m: column k is source k (1/s·(V or A) per unit of the source)
  std::vector<ElementId> states; ///< the storage elements, in state order
};

/// A and B of `network`. A coefficient that is what rounding leaves of a cancellation is 0
/// (ReducedNetwork::negligible), so that a capacitor with no DC path keeps its exact λ = 0. A
/// storage element held at zero (an inductor whose only path is open) has a zero row: its
/// state stays 0.
StateSpace state_space(const Circuit& circuit, const ReducedNetwork& network);

}  // namespace netfold
