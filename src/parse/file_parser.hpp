#pragma once
/// \file file_parser.hpp
/// Internal: the parser of a whole `.nf` file. Statements are read one at a time; names are
/// resolved once the whole file has been read, so that a line may refer to an element defined
/// below it. Element lines are read in parse_elements.cpp and parse_attributes.cpp, directives
/// in parse_directives.cpp, claims in parse_claims.cpp.

#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <unordered_map>
#include <unordered_set>
#include <vector>

#include <fmt/format.h>

#include "parse/parser.hpp"

namespace netfold::parser {

class FileParser : Reader {
 public:
  explicit FileParser(std::shared_ptr<const SourceText> source)
      : Reader(source->text()), source_(source), builder_(source) {
    // Every element line holds a ':' (and is a line): a cheap upper estimate of the element
    // count spares a large file the regrowing of the circuit's tables.
    std::string_view t = source->text();
    auto colons = static_cast<std::size_t>(std::count(t.begin(), t.end(), ':'));
    std::size_t estimate = std::min(colons, source->line_count());
    builder_.reserve(estimate, estimate + 1);
  }

  Circuit run();

 private:
  struct SenseRef {
    bool given = false;
    bool nodes = false;  // vcvs/vccs: a -> b; ccvs/cccs: element a
    NameRef a, b;
  };
  // What the attributes of one element line have set so far.
  struct AttributeState {
    std::uint32_t seen = 0;  // bits of the Attr given
    RawValue last_event;     // time of the previous switch event, for messages
    SenseRef sense;
    bool gain = false;
  };
  struct PendingSense {
    ElementId id;
    SenseRef ref;
  };
  struct PendingClaim {
    Claim claim;
    std::optional<PendingObservable> observable;
    std::optional<NameRef> element;
    SourceLoc quantity_loc;  // the quantity's first word
  };

  // Lookups during resolution: the builder's tables, and the names met on lines that failed.
  class ParseScope : public Scope {
   public:
    explicit ParseScope(const FileParser& p) : p_(p) {}
    Lookup element(std::string_view name) const override {
      if (auto id = p_.builder_.find_element(name)) return {*id, false};
      return {kNone, p_.broken_elements_.count(name) > 0};
    }
    const Element& element_at(ElementId id) const override { return p_.builder_.elements().at(id); }
    Lookup node(std::string_view name) const override {
      if (auto id = p_.builder_.find_node(name)) return {*id, false};
      return {kNone, p_.broken_nodes_.count(name) > 0};
    }
    std::string_view reference() const override { return p_.ground_name_; }

   private:
    const FileParser& p_;
  };

  void report(SourceLoc loc, std::string message) { errors_.push_back({loc, std::move(message)}); }

  void parse_statement();
  bool parse_directive(const Token& keyword);
  void parse_element();
  NodeId take_node();
  Waveform parse_waveform(const KindInfo& info);
  std::string_view parse_element_value(Element& e, const KindInfo& info);
  void check_element(const Element& e, const KindInfo& info, const Token& name, const AttributeState& state);
  void parse_attributes(Element& e, const KindInfo& info, std::string_view expected, AttributeState& state);
  Attr take_attribute(const KindInfo& info);
  void parse_attribute(Element& e, const KindInfo& info, Attr attr, const Token& keyword, AttributeState& state);
  void parse_rating(Element& e, const Text& place, Dimension dim, RatingKind kind, SourceLoc loc);
  void parse_rated(Element& e, const KindInfo& info, const Token& keyword);
  void parse_event(Element& e, const Token& keyword, bool closes, AttributeState& state);
  EventTrigger take_trigger(const Token& keyword, bool closes);
  Tolerance parse_tolerance(const KindInfo& info, const Token& keyword);
  double percent_fraction(const RawValue& v, const KindInfo& info);
  void parse_sense(const Element& e, const KindInfo& info, SenseRef& sense);
  void note_broken_element();

  void once(const std::optional<std::uint32_t>& line, const Token& keyword) const {
    if (line)
      fail(keyword.loc, fmt::format("'{}' may be given only once; it is already given on line {}", keyword.text, *line));
  }
  void parse_title(const Token& keyword);
  void parse_ground(const Token& keyword);
  void parse_window(const Token& keyword);
  void parse_resolution(const Token& keyword);
  void parse_watch();
  void parse_sweep();
  void parse_expect(const Token& keyword);
  Dimension parse_claim_quantity(PendingClaim& pending);
  void parse_claim_bound(Claim& c, std::size_t first);
  Dimension parse_share(PendingClaim& pending);
  Dimension parse_time_below(PendingClaim& pending);
  void check_claim(const PendingClaim& p) const;
  void parse_golden_tolerance(const Token& keyword);
  int take_segment();
  std::string span_text(std::size_t first, std::size_t last) const;

  void resolve_references();
  template <typename F>
  void resolving(F&& f) {
    try {
      f();
    } catch (const StatementError& e) {
      report(e.loc, e.message);
    } catch (const Silenced&) {
    }
  }

  std::shared_ptr<const SourceText> source_;
  CircuitBuilder builder_;
  std::vector<StatementError> errors_;

  // Names are looked up in the builder's own tables; only names met on lines that failed are
  // kept here (with the line, for duplicates), so that their later uses are not reported again.
  std::unordered_map<std::string_view, std::uint32_t> broken_elements_;
  std::unordered_set<std::string_view> broken_nodes_;
  std::size_t element_lines_ = 0;
  bool element_line_failed_ = false;
  bool in_element_ = false;  // the statement being read is an element line

  std::optional<std::uint32_t> title_line_, ground_line_, window_line_, resolution_line_, golden_line_;
  std::string_view ground_name_ = "gnd";
  SourceLoc ground_name_loc_, ground_loc_;

  std::vector<PendingSense> senses_;
  std::vector<PendingObservable> watches_;
  std::vector<PendingSweep> sweeps_;
  std::vector<PendingClaim> claims_;
};

}  // namespace netfold::parser
