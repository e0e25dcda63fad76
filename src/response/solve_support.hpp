#pragma once
// The solve stage's shared helpers: messages in circuit terms for faults found while solving,
// the default window and the checks of the inputs that size it. Private to src/response/.

#include <string>
#include <vector>

#include "netfold/solve.hpp"

namespace netfold::detail {

// Limits (the reasons are beside their definitions in solve_support.cpp).
extern const double kMaxResistanceSpan;
extern const double kShortestTau;
extern const double kMaxSamples;
extern const double kMaxDefaultWindow;

std::string segment_text(const Circuit& c, const Segment& s);
// The k-th (from 0) segment of the schedule, before any numerics: span, positions, changes.
Segment scheduled_segment(const Circuit& c, const ScheduledSegment& planned, std::size_t k);
std::string names_of(const Circuit& c, const std::vector<ElementId>& ids);
std::string node_names(const Circuit& c, const std::vector<NodeId>& ids);
[[noreturn]] void fail(const Circuit& c, SourceLoc loc, std::string message);
// The elements of a fault other than the storage element (the ones the message blames).
std::vector<ElementId> all_but(const std::vector<ElementId>& ids, ElementId storage);
// A switch that closes at the start of the segment and so creates the fault.
ElementId switch_closing_at(const AppliedScenario& applied, const std::vector<ElementId>& ids, double t);
// Turns a structural problem of a segment's network into a message in circuit terms.
[[noreturn]] void report_problem(const AppliedScenario& applied, const TopologyProblem& p, const std::string& where,
                                 ElementId storage, double state, double segment_start);
[[noreturn]] void report_singular(const Circuit& c, const ReducedNetwork& net, const std::string& where);
void check_value_span(const Circuit& c);
std::vector<std::string> floating_part_warnings(const Circuit& c, const std::vector<const NodalSystem*>& systems,
                                                ElementId storage);
double slowest_frequency(const Circuit& c);
double level_before_zero(const Waveform& w);
Window default_window(const AppliedScenario& applied, NetworkCache& cache, ElementId storage, double tau_scale,
                      std::vector<std::string>& warnings, double states_tau = 0.0);
void check_resolution(const Circuit& c, const Window& window, double resolution, std::vector<std::string>& warnings);

}  // namespace netfold::detail
