#pragma once
// Matrix Market writers (the NIST exchange format that scipy.io.mmread reads), for comparing the
// project's sparse solve with scipy's on the same matrix and right-hand sides (bench_spsolve.cpp).
// Values are written with 17 significant digits, so that they read back bit for bit.
#include <cstdio>
#include <filesystem>
#include <iterator>
#include <stdexcept>

#include <Eigen/Dense>
#include <Eigen/SparseCore>
#include <fmt/format.h>

namespace netfold::bench {

namespace detail {
inline void write_all(const std::filesystem::path& path, const fmt::memory_buffer& buf) {
  std::FILE* f = std::fopen(path.c_str(), "wb");
  if (!f) throw std::runtime_error(fmt::format("cannot open {} for writing", path.string()));
  const bool ok = std::fwrite(buf.data(), 1, buf.size(), f) == buf.size();
  if (std::fclose(f) != 0 || !ok) throw std::runtime_error(fmt::format("cannot write {}", path.string()));
}
}  // namespace detail

/// A sparse matrix as `coordinate real general`, 1-based indices, column by column.
inline void write_matrix_market(const std::filesystem::path& path, const Eigen::SparseMatrix<double>& a) {
  fmt::memory_buffer buf;
  fmt::format_to(std::back_inserter(buf), "%%MatrixMarket matrix coordinate real general\n{} {} {}\n", a.rows(),
                 a.cols(), a.nonZeros());
  for (Eigen::Index k = 0; k < a.outerSize(); ++k)
    for (Eigen::SparseMatrix<double>::InnerIterator it(a, k); it; ++it)
      fmt::format_to(std::back_inserter(buf), "{} {} {:.17g}\n", it.row() + 1, it.col() + 1, it.value());
  detail::write_all(path, buf);
}

/// A dense matrix as `array real general` (column-major, as the format requires).
inline void write_matrix_market(const std::filesystem::path& path, const Eigen::MatrixXd& a) {
  fmt::memory_buffer buf;
  fmt::format_to(std::back_inserter(buf), "%%MatrixMarket matrix array real general\n{} {}\n", a.rows(), a.cols());
  for (Eigen::Index j = 0; j < a.cols(); ++j)
    for (Eigen::Index i = 0; i < a.rows(); ++i) fmt::format_to(std::back_inserter(buf), "{:.17g}\n", a(i, j));
  detail::write_all(path, buf);
}

}  // namespace netfold::bench
