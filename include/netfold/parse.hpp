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

#include <cstddef>
#include <filesystem>
#include <string>
#include <string_view>

#include "netfold/netlist.hpp"

namespace netfold {

/// Most diagnostics one parse reports before it stops.
inline constexpr std::size_t kMaxDiagnostics = 20;

/// Largest |time| a file or an option may give, in seconds (about 30 years; the longest default
/// window is the same): events, window bounds, step times, resolutions, claim instants and
/// closing-time sweeps. At 1e9 s neighbouring doubles are 1.2e-7 s apart; at 1e15 s, 0.125 s.
inline constexpr double kMaxTime = 1e9;

/// Most intervals a sweep's grid may have (the grid holds one point more). A `step` finer than
/// (TO − FROM) / kMaxSweepIntervals is refused rather than leave part of the range unswept.
inline constexpr double kMaxSweepIntervals = 100000;

/// Largest `.nf` file read, in bytes (256 MiB, some 4·10⁶ elements). A longer file, or a
/// stream that runs past it (a device), is refused before it fills the memory.
inline constexpr std::size_t kMaxFileBytes = std::size_t{256} << 20;

/// Parses the text of a `.nf` file. `path` is used in messages only.
/// Throws InputError with every independent error found (up to kMaxDiagnostics).
Circuit parse_netlist(std::string_view text, std::string path);

/// Reads and parses a file. An unreadable, empty or non-text file is an InputError, and so is
/// one longer than kMaxFileBytes; a NUL byte is found as the file is read, so that a device
/// such as /dev/zero is refused at its first block.
Circuit parse_netlist_file(const std::filesystem::path& path);

/// Parses an observable as written on a `watch` line or the command line
/// (`coil_l.i`, `@a`, `@a - @b`) against an existing circuit.
Observable parse_observable_argument(const Circuit& circuit, std::string_view text,
                                     std::string_view option);

/// Parses a `--sweep TARGET=FROM..TO` argument against an existing circuit. Errors name the
/// option and quote the argument: `netfold: error: --sweep 'K1.closes=0..50ms': ...`.
Sweep parse_sweep_argument(const Circuit& circuit, std::string_view text);

}  // namespace netfold
