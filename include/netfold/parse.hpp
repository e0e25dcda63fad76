#pragma once
/// \file parse.hpp
/// Reading `.nf` files into a checked Circuit (see docs/netlist-format.md).
///
/// Example:
/// \code
///   netfold::Circuit c = netfold::parse_netlist("sensor: resistor a -> gnd, 1k\n", "demo.nf");
///   // c.elements()[0].value == 1000.0
/// \endcode
/// A bad file throws InputError whose diagnostics read, for example,
/// `valve.nf:7:22: error: '470 nF' is a capacitance, but a resistor needs a resistance`.

#include <filesystem>
#include <string>
#include <string_view>

#include "netfold/netlist.hpp"

namespace netfold {

/// Most diagnostics one parse reports before it stops.
inline constexpr std::size_t kMaxDiagnostics = 20;

/// Parses the text of a `.nf` file. `path` is used in messages only.
/// Throws InputError with every independent error found (up to kMaxDiagnostics).
Circuit parse_netlist(std::string_view text, std::string path);

/// Reads and parses a file. An unreadable, empty or non-text file is an InputError.
Circuit parse_netlist_file(const std::filesystem::path& path);

/// Parses an observable as written on a `watch` line or the command line
/// (`coil_l.i`, `@a`, `@a - @b`) against an existing circuit.
Observable parse_observable_argument(const Circuit& circuit, std::string_view text,
                                     std::string_view option);

/// Parses a `--sweep TARGET=FROM..TO` argument against an existing circuit.
Sweep parse_sweep_argument(const Circuit& circuit, std::string_view text);

}  // namespace netfold
