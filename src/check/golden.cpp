#include "netfold/golden.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <fstream>
#include <sstream>
#include <vector>

#include <fmt/format.h>

#include "netfold/report.hpp"
#include "netfold/units.hpp"

namespace netfold {

namespace {

// A waveform CSV read back: the header's column names and the numbers row by row.
struct Table {
  std::vector<std::string> header;
  std::vector<std::vector<double>> rows;
};

std::vector<std::string_view> split_lines(std::string_view text) {
  std::vector<std::string_view> lines;
  std::size_t start = 0;
  while (start < text.size()) {
    std::size_t end = text.find('\n', start);
    if (end == std::string_view::npos) end = text.size();
    std::string_view line = text.substr(start, end - start);
    if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
    lines.push_back(line);
    start = end + 1;
  }
  // A final newline ends the last row; it does not start an empty one.
  while (!lines.empty() && lines.back().empty()) lines.pop_back();
  return lines;
}

std::vector<std::string_view> split_fields(std::string_view line) {
  std::vector<std::string_view> fields;
  std::size_t start = 0;
  for (;;) {
    std::size_t comma = line.find(',', start);
    fields.push_back(line.substr(start, comma == std::string_view::npos ? std::string_view::npos : comma - start));
    if (comma == std::string_view::npos) break;
    start = comma + 1;
  }
  return fields;
}

// Column (in characters, from 1) of byte `at` of `line`.
std::size_t column_of(std::string_view line, std::size_t at) {
  std::size_t col = 1;
  for (std::size_t k = 0; k < at && k < line.size(); ++k)
    if ((static_cast<unsigned char>(line[k]) & 0xC0) != 0x80) ++col;
  return col;
}

// Reads `text`; on a malformed line returns nothing and says which, in `error`, as
// `WHERE:LINE:COL: what was expected, what was found`. A value must be a finite number: with
// `inf` in a golden file, the allowance (tolerance × peak) would be infinite and every
// waveform would pass.
std::optional<Table> read_table(std::string_view text, const std::string& where, std::string& error) {
  Table t;
  std::vector<std::string_view> lines = split_lines(text);
  if (lines.empty()) {
    error = fmt::format("{}:1:1: expected a header line, found an empty file", where);
    return std::nullopt;
  }
  for (auto f : split_fields(lines[0])) t.header.emplace_back(f);
  for (std::size_t k = 1; k < lines.size(); ++k) {
    std::vector<std::string_view> fields = split_fields(lines[k]);
    if (fields.size() != t.header.size()) {
      error = fmt::format("{}:{}:1: expected {} fields as in the header, found {}", where, k + 1, t.header.size(),
                          fields.size());
      return std::nullopt;
    }
    std::vector<double> row;
    row.reserve(fields.size());
    for (std::string_view f : fields) {
      while (!f.empty() && f.front() == ' ') f.remove_prefix(1);
      while (!f.empty() && f.back() == ' ') f.remove_suffix(1);
      double v = 0.0;
      auto [end, ec] = std::from_chars(f.data(), f.data() + f.size(), v);
      const std::size_t col = column_of(lines[k], static_cast<std::size_t>(f.data() - lines[k].data()));
      if (ec == std::errc::result_out_of_range) {
        error = fmt::format("{}:{}:{}: expected a number double precision can carry, found '{}'", where, k + 1, col, f);
        return std::nullopt;
      }
      if (ec != std::errc() || end != f.data() + f.size()) {
        error = fmt::format("{}:{}:{}: expected a number, found '{}'", where, k + 1, col, f);
        return std::nullopt;
      }
      if (!std::isfinite(v)) {
        error = fmt::format("{}:{}:{}: expected a finite number, found '{}'", where, k + 1, col, f);
        return std::nullopt;
      }
      row.push_back(v);
    }
    t.rows.push_back(std::move(row));
  }
  return t;
}

// The SI unit of a CSV column, from its name (`t`, `X.v`, `X.i`, `X.p`, `@n`, `@a - @b`).
std::string_view column_unit(std::string_view name) {
  if (name == "t") return "s";
  if (name.size() > 2 && name[name.size() - 2] == '.') {
    switch (name.back()) {
      case 'i': return "A";
      case 'p': return "W";
      default: return "V";
    }
  }
  return "V";
}

std::string show_tolerance(double rel) { return fmt::format("{:g}", rel); }

}  // namespace

std::filesystem::path golden_path_for(const std::filesystem::path& netlist) {
  std::filesystem::path p = netlist;
  p.replace_extension(".golden.csv");
  return p;
}

GoldenResult compare_golden(std::string_view fresh_csv, std::string_view golden_csv, double rel_tol,
                            const std::string& golden_path) {
  GoldenResult r;
  r.golden_path = golden_path;
  std::string error;
  std::optional<Table> golden = read_table(golden_csv, golden_path, error);
  if (!golden) {
    r.message = error + "; rewrite it with --update-golden";
    return r;
  }
  std::optional<Table> fresh = read_table(fresh_csv, "the fresh waveform", error);
  if (!fresh) {
    r.message = error;
    return r;
  }
  if (fresh->header != golden->header) {
    r.message = fmt::format("the columns differ: golden '{}', now '{}'", fmt::join(golden->header, ","),
                            fmt::join(fresh->header, ","));
    return r;
  }
  if (fresh->rows.size() != golden->rows.size()) {
    r.message = fmt::format("the row count differs: golden {} rows, now {} (the window or the resolution changed)",
                            golden->rows.size(), fresh->rows.size());
    return r;
  }
  const std::size_t n_cols = golden->header.size();
  const std::size_t n_rows = golden->rows.size();
  double worst_ratio = 0.0;
  std::size_t worst_col = 0;
  for (std::size_t c = 0; c < n_cols; ++c) {
    double peak = 0.0;
    for (std::size_t k = 0; k < n_rows; ++k) {
      double g = golden->rows[k][c], f = fresh->rows[k][c];
      peak = std::max({peak, std::fabs(g), std::fabs(f)});
    }
    const double allowed = rel_tol * peak;
    const std::string_view unit = column_unit(golden->header[c]);
    for (std::size_t k = 0; k < n_rows; ++k) {
      double g = golden->rows[k][c], f = fresh->rows[k][c];
      double d = std::fabs(f - g);
      if (!(d <= allowed)) {
        const bool times = c == 0;
        r.message = fmt::format(
            "{} '{}' differs by {} at t = {} (row {}): golden {}, now {}, more than {} × peak {} = {}",
            times ? "the sample times differ: column" : "column", golden->header[c], format_si(d, unit),
            format_si(golden->rows[k][0], "s"), k + 2, format_si(g, unit, 8), format_si(f, unit, 8),
            show_tolerance(rel_tol), format_si(peak, unit), format_si(allowed, unit));
        return r;
      }
      if (peak > 0.0 && d / peak > worst_ratio) {
        worst_ratio = d / peak;
        worst_col = c;
      }
    }
  }
  r.passed = true;
  r.message = fmt::format("{} rows × {} columns within {} of each column's peak ({})", n_rows, n_cols,
                          show_tolerance(rel_tol),
                          worst_ratio == 0.0 ? std::string("identical")
                                             : fmt::format("largest deviation {:.3g} of peak, in '{}'", worst_ratio,
                                                           golden->header[worst_col]));
  return r;
}

std::optional<GoldenResult> check_golden(const Solution& solution, const std::filesystem::path& netlist,
                                         bool update) {
  std::filesystem::path golden = golden_path_for(netlist);
  std::error_code ec;
  if (!std::filesystem::is_regular_file(golden, ec)) return std::nullopt;
  const std::string golden_name = golden.generic_string();
  const std::string fresh = waveform_csv(solution);
  if (update) {
    GoldenResult r;
    r.golden_path = golden_name;
    try {
      std::ostringstream unused;
      write_output(golden_name, fresh, unused);
    } catch (const Error& e) {
      r.message = fmt::format("cannot rewrite the golden file: {}", e.what());
      return r;
    }
    r.passed = true;
    r.updated = true;
    std::size_t rows = static_cast<std::size_t>(std::count(fresh.begin(), fresh.end(), '\n'));
    r.message = fmt::format("rewritten with the fresh waveform ({} rows)", rows > 0 ? rows - 1 : 0);
    return r;
  }
  std::ifstream in(golden, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  if (!in && !in.eof()) {
    GoldenResult r;
    r.golden_path = golden_name;
    r.message = "cannot read the golden file";
    return r;
  }
  const double rel = solution.circuit().golden_tolerance().value_or(kDefaultGoldenTolerance);
  return compare_golden(fresh, text.str(), rel, golden_name);
}

}  // namespace netfold
