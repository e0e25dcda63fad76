// Scratch folders and whole-file reads and writes for the tests that run on real files.
#pragma once

#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <system_error>
#include <vector>

namespace netfold_test {

/// A fresh, empty folder under the system's temporary directory, removed at scope exit.
/// `tag` keeps the folders of different test programs apart when they run in parallel.
class TempDir {
 public:
  explicit TempDir(const std::string& tag = "test") {
    static std::atomic<int> counter{0};
    path_ = std::filesystem::temp_directory_path() /
            ("netfold_" + tag + "_" + std::to_string(::getpid()) + "_" + std::to_string(counter++));
    std::filesystem::remove_all(path_);
    std::filesystem::create_directories(path_);
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  const std::filesystem::path& path() const { return path_; }
  /// Names of the entries in the folder, sorted.
  std::vector<std::string> entries() const {
    std::vector<std::string> names;
    for (const auto& e : std::filesystem::directory_iterator(path_)) names.push_back(e.path().filename().string());
    std::sort(names.begin(), names.end());
    return names;
  }

 private:
  std::filesystem::path path_;
};

/// Writes `text` to `p`, creating its folder.
inline void write_file(const std::filesystem::path& p, const std::string& text) {
  if (p.has_parent_path()) std::filesystem::create_directories(p.parent_path());
  std::ofstream out(p, std::ios::binary);
  out << text;
}

/// The whole file, bytes as they are ("" when it cannot be read).
inline std::string read_file(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

}  // namespace netfold_test
