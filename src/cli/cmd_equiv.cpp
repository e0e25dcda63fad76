// `netfold equiv FILE`: Thevenin and Norton equivalent at the storage element or a port.
#include <iostream>
#include <sstream>

#include "commands.hpp"
#include "netfold/parse.hpp"
#include <fmt/format.h>

#include "netfold/report.hpp"
#include "netfold/solve.hpp"
#include "netfold/units.hpp"

namespace netfold::cli {

namespace {
struct EquivArgs {
  std::string file, port, at, json;
};
}  // namespace

Command register_equiv(CLI::App& app) {
  auto args = std::make_shared<EquivArgs>();
  CLI::App* sub = app.add_subcommand("equiv", "Thevenin and Norton equivalent seen at the storage element or a port");
  sub->add_option("FILE", args->file, "the .nf circuit")->required();
  sub->add_option("--port", args->port, "two nodes A,B (default: the storage element's terminals)");
  sub->add_option("--at", args->at, "a time that picks the segment (default 0 s)");
  sub->add_option("--json", args->json, "write the equivalent as JSON ('-' = standard output)");
  return [args]() {
    check_output_paths({{"--json", args->json}}, {{args->file, "the input circuit"}});
    Circuit circuit = parse_netlist_file(args->file);
    double at = args->at.empty() ? 0.0 : parse_quantity_argument(args->at, Dimension::time, "--at").value;
    std::optional<std::pair<NodeId, NodeId>> port;
    if (!args->port.empty()) {
      auto comma = args->port.find(',');
      if (comma == std::string::npos)
        throw argument_error("--port", "expected two nodes as A,B, found '" + args->port + "'");
      auto node = [&](std::string name) {
        while (!name.empty() && (name.front() == ' ' || name.front() == '@')) name.erase(name.begin());
        while (!name.empty() && name.back() == ' ') name.pop_back();
        auto id = circuit.find_node(name);
        if (!id) {
          // Name the reference node as the file spells it: a port at "gnd" fails in a file
          // whose reference is `ground n`.
          const std::string ground = circuit.nodes()[circuit.ground()];
          const SourceLoc gl = circuit.ground_loc();
          throw argument_error(
              "--port", fmt::format("unknown node '{}'; this file's reference node is '{}' ({}), and its nodes "
                                    "are named as on its element lines",
                                    name, ground,
                                    gl.line > 0 ? fmt::format("'ground {}' at line {}", ground, gl.line)
                                                : std::string("the default, no 'ground' line")));
        }
        return *id;
      };
      port = std::make_pair(node(args->port.substr(0, comma)), node(args->port.substr(comma + 1)));
    }
    Solution solution = solve(circuit);
    if (at < 0.0 || at > solution.window().to)
      throw argument_error("--at", "the time must lie in the window 0 .. " + format_si(solution.window().to, "s"));
    PortEquivalent eq = port_equivalent(solution, port, at);
    std::string json = args->json.empty() ? "" : equivalent_json(eq, solution);
    std::ostringstream text;
    write_equivalent_text(text, eq, solution);
    if (!args->json.empty()) write_output(args->json, json, std::cout, "--json");
    if (args->json != "-") std::cout << text.str();
    return 0;
  };
}

}  // namespace netfold::cli
