// Output files: the checks on output paths made before a command computes anything, the
// atomic writer (exclusive temporary file beside the target, write, fsync, rename), and the
// signal handler that removes the temporary files of an interrupted run.
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <atomic>
#include <cctype>
#include <cerrno>
#include <csignal>
#include <cstring>
#include <memory>
#include <thread>

#include <fmt/format.h>

#include "netfold/report.hpp"

namespace netfold {

namespace fs = std::filesystem;

namespace {

// ---- Temporary files being written, for the signal handler --------------------------------
// A signal handler can only reach data with static storage, so this one table is global.
// Every path in it belongs to this process (its name carries the process id), so removing one
// that was never created or already renamed is harmless.
constexpr std::size_t kSlots = 64;
constexpr std::size_t kPathBytes = 4096;  // PATH_MAX on Linux, terminating NUL included
enum SlotState : int { kFree = 0, kFilling = 1, kArmed = 2 };
struct Slot {
  std::atomic<int> state{kFree};
  char path[kPathBytes] = {};
};
static_assert(std::atomic<int>::is_always_lock_free, "the signal handler reads the slot states");
Slot g_slots[kSlots];
std::atomic<unsigned> g_next_slot{0};
std::atomic<unsigned> g_temp_counter{0};

// Slots are taken round-robin so that a slot just freed is not refilled while a handler on
// another thread may still be reading its path.
std::size_t claim_slot(const std::string& path) {
  for (;;) {
    for (std::size_t tries = 0; tries < kSlots; ++tries) {
      Slot& s = g_slots[g_next_slot.fetch_add(1) % kSlots];
      int expected = kFree;
      if (!s.state.compare_exchange_strong(expected, kFilling)) continue;
      std::memcpy(s.path, path.c_str(), path.size() + 1);
      s.state.store(kArmed, std::memory_order_release);
      return static_cast<std::size_t>(&s - g_slots);
    }
    // Every slot busy: holders free theirs once their files are renamed, so waiting ends.
    std::this_thread::yield();
  }
}

void release_slot(std::size_t index) { g_slots[index].state.store(kFree, std::memory_order_release); }

extern "C" void remove_temporary_files_and_die(int sig) {
  for (Slot& s : g_slots)
    if (s.state.load(std::memory_order_acquire) == kArmed) ::unlink(s.path);
  // The default action ends the process as the signal would have without us (status and all);
  // the signal is blocked while the handler runs, so it is delivered as the handler returns.
  struct sigaction dfl {};
  dfl.sa_handler = SIG_DFL;
  sigemptyset(&dfl.sa_mask);
  ::sigaction(sig, &dfl, nullptr);
  ::raise(sig);
}

// ---- Messages ------------------------------------------------------------------------------

std::string errno_text(int err) {
  std::string s = std::strerror(err);
  if (!s.empty()) s[0] = static_cast<char>(std::tolower(static_cast<unsigned char>(s[0])));
  return s;
}

InputError output_error(std::string_view option, const std::string& path, const std::string& message) {
  if (option.empty()) return argument_error("", fmt::format("cannot write '{}': {}", path, message));
  return argument_error(fmt::format("{} '{}'", option, path), message);
}

// What a path is when it is not a regular file, or nullptr for a regular file.
const char* kind_of_non_file(mode_t mode) {
  if (S_ISREG(mode)) return nullptr;
  if (S_ISDIR(mode)) return "a folder";
  if (S_ISCHR(mode) || S_ISBLK(mode)) return "a device";
  if (S_ISFIFO(mode)) return "a FIFO (named pipe)";
  if (S_ISSOCK(mode)) return "a socket";
  return "not a regular file";
}

std::string not_a_file_message(mode_t mode) {
  return fmt::format("that is {}, not a regular file; name a file, or '-' for standard output", kind_of_non_file(mode));
}

fs::path folder_of(const fs::path& p) { return p.has_parent_path() ? p.parent_path() : fs::path("."); }

// ---- Checks before computing ---------------------------------------------------------------

// The identity of an output: the file's device and inode when it exists, else the folder's
// device and inode and the name in it; two paths with one identity are one file.
struct FileIdentity {
  dev_t dev = 0;
  ino_t ino = 0;
  std::string name;  // empty for an existing file
  bool operator==(const FileIdentity&) const = default;
};

// Checks one output path and returns its identity; throws for a path that cannot be written.
FileIdentity check_one_output(const OutputRequest& o) {
  auto refuse = [&](const std::string& message) { return output_error(o.option, o.path, message); };
  struct stat st {};
  if (::lstat(o.path.c_str(), &st) == 0) {
    fs::path file = o.path;
    if (S_ISLNK(st.st_mode)) {
      // A link to a regular file is written through: the file is replaced, the link kept.
      std::error_code ec;
      file = fs::canonical(o.path, ec);
      if (ec)
        throw refuse(fmt::format("that is a symbolic link that leads to no file ({}); name a file, or '-' for "
                                 "standard output",
                                 errno_text(ec.value())));
      if (::stat(file.c_str(), &st) != 0) {
        int err = errno;
        throw refuse(errno_text(err));
      }
    }
    if (!S_ISREG(st.st_mode)) throw refuse(not_a_file_message(st.st_mode));
    const fs::path folder = folder_of(file);
    if (::access(folder.c_str(), W_OK | X_OK) != 0) {
      int err = errno;
      throw refuse(fmt::format("cannot replace a file in the folder '{}': {}", folder.string(), errno_text(err)));
    }
    return {st.st_dev, st.st_ino, ""};
  }
  int err = errno;
  const fs::path p = o.path;
  if (err == ENOTDIR) throw refuse(fmt::format("'{}' is not a folder", folder_of(p).string()));
  if (err != ENOENT) throw refuse(errno_text(err));
  const std::string name = p.filename().string();
  if (name.empty() || name == "." || name == "..")
    throw refuse("that names a folder, not a file; name a file, or '-' for standard output");
  const fs::path folder = folder_of(p);
  struct stat dir {};
  if (::stat(folder.c_str(), &dir) != 0) {
    err = errno;
    if (err == ENOENT) throw refuse(fmt::format("the folder '{}' does not exist", folder.string()));
    throw refuse(fmt::format("cannot reach the folder '{}': {}", folder.string(), errno_text(err)));
  }
  if (!S_ISDIR(dir.st_mode)) throw refuse(fmt::format("'{}' is not a folder", folder.string()));
  if (::access(folder.c_str(), W_OK | X_OK) != 0) {
    err = errno;
    throw refuse(fmt::format("cannot create a file in the folder '{}': {}", folder.string(), errno_text(err)));
  }
  return {dir.st_dev, dir.st_ino, name};
}

// ---- The atomic writer ---------------------------------------------------------------------

// A complete temporary copy of one output beside its target, removed unless committed.
class TempFile {
 public:
  explicit TempFile(const OutputFile& file) : file_(file) {}
  ~TempFile() {
    if (fd_ >= 0) ::close(fd_);
    if (!committed_ && created_) ::unlink(temp_.c_str());
    if (slot_) release_slot(*slot_);
  }
  TempFile(const TempFile&) = delete;
  TempFile& operator=(const TempFile&) = delete;

  /// Writes the whole content to a new temporary file beside the target. Not in the
  /// constructor: a throw there would skip the destructor, which removes the file.
  void write() {
    resolve_target();
    create();
    write_all();
  }
  /// Renames the temporary file over the target.
  void commit() {
    if (::rename(temp_.c_str(), target_.c_str()) != 0) {
      int err = errno;
      throw fail(fmt::format("cannot rename '{}' to it: {}", temp_.string(), errno_text(err)));
    }
    committed_ = true;
  }
  /// The folder the file was written in.
  fs::path folder() const { return folder_of(target_); }

 private:
  InputError fail(const std::string& message) const { return output_error(file_.option, file_.path, message); }

  // Follows a symbolic link to the regular file it leads to; refuses anything else that exists.
  void resolve_target() {
    target_ = file_.path;
    struct stat st {};
    if (::lstat(file_.path.c_str(), &st) != 0) {
      int err = errno;
      if (err == ENOENT) return;
      throw fail(errno_text(err));
    }
    if (S_ISLNK(st.st_mode)) {
      std::error_code ec;
      target_ = fs::canonical(file_.path, ec);
      if (ec) throw fail(fmt::format("that is a symbolic link that leads to no file ({})", errno_text(ec.value())));
      if (::lstat(target_.c_str(), &st) != 0) {
        int err = errno;
        throw fail(errno_text(err));
      }
    }
    if (!S_ISREG(st.st_mode)) throw fail(not_a_file_message(st.st_mode));
    existing_mode_ = st.st_mode & 07777;
  }

  void create() {
    const fs::path folder = fs::absolute(folder_of(target_));
    for (int attempt = 0;; ++attempt) {
      temp_ = folder / fmt::format("{}.tmp{}-{}", target_.filename().string(), static_cast<long>(::getpid()),
                                   g_temp_counter.fetch_add(1));
      const std::string name = temp_.string();
      if (name.size() >= kPathBytes) throw fail("the path of its temporary file is too long");
      slot_ = claim_slot(name);  // before the file exists, so that no signal can miss it
      // A new file gets 0666 less the umask, as the shell's '>' gives; a replaced file keeps
      // its mode (set below, past the umask).
      fd_ = ::open(name.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, existing_mode_ ? 0600 : 0666);
      if (fd_ >= 0) break;
      int err = errno;
      release_slot(*slot_);
      slot_.reset();
      if (err != EEXIST || attempt >= 100)
        throw fail(fmt::format("cannot create the temporary file '{}': {}", name, errno_text(err)));
    }
    created_ = true;
    // Best effort: a file system without modes (vfat) refuses, and the content matters more.
    if (existing_mode_) (void)::fchmod(fd_, existing_mode_);
  }

  void write_all() {
    const char* data = file_.content.data();
    std::size_t left = file_.content.size();
    while (left > 0) {
      ssize_t n = ::write(fd_, data, std::min<std::size_t>(left, std::size_t{1} << 20));
      if (n < 0) {
        int err = errno;
        if (err == EINTR) continue;
        throw fail(fmt::format("cannot write the temporary file '{}': {}", temp_.string(), errno_text(err)));
      }
      data += n;
      left -= static_cast<std::size_t>(n);
    }
    if (::fsync(fd_) != 0) {
      int err = errno;
      throw fail(fmt::format("cannot flush the temporary file '{}' to disk: {}", temp_.string(), errno_text(err)));
    }
    int fd = fd_;
    fd_ = -1;
    if (::close(fd) != 0) {
      int err = errno;
      throw fail(fmt::format("cannot close the temporary file '{}': {}", temp_.string(), errno_text(err)));
    }
  }

  const OutputFile& file_;
  fs::path target_, temp_;
  mode_t existing_mode_ = 0;  // 0: the target does not exist yet
  int fd_ = -1;
  bool created_ = false, committed_ = false;
  std::optional<std::size_t> slot_;
};

// Makes the renames durable; best effort, since some file systems cannot sync a folder and the
// files themselves are complete either way.
void sync_folder(const fs::path& folder) {
  int fd = ::open(folder.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) return;
  (void)::fsync(fd);
  ::close(fd);
}

}  // namespace

void check_output_paths(const std::vector<OutputRequest>& outputs, const std::vector<InputFile>& inputs) {
  std::vector<std::pair<FileIdentity, const OutputRequest*>> seen;
  const OutputRequest* to_stdout = nullptr;
  std::optional<std::vector<std::pair<FileIdentity, const InputFile*>>> input_ids;
  for (const auto& o : outputs) {
    if (o.path.empty()) continue;
    if (o.path == "-") {
      if (to_stdout)
        throw output_error(o.option, o.path,
                           fmt::format("{} already writes to standard output; only one output can go there",
                                       to_stdout->option));
      to_stdout = &o;
      continue;
    }
    FileIdentity id = check_one_output(o);
    if (!input_ids) {
      // Inputs are looked at only when a file is to be written; a missing one is the
      // parser's to report.
      input_ids.emplace();
      for (const auto& in : inputs) {
        struct stat st {};
        if (::stat(in.path.c_str(), &st) == 0) input_ids->push_back({{st.st_dev, st.st_ino, ""}, &in});
      }
    }
    for (const auto& [in_id, in] : *input_ids)
      if (in_id == id)
        throw output_error(o.option, o.path, fmt::format("that is {}; choose another output path", in->role));
    for (const auto& [out_id, other] : seen)
      if (out_id == id)
        throw output_error(o.option, o.path,
                           fmt::format("that is also the output of {}; choose another output path", other->option));
    seen.push_back({id, &o});
  }
}

void write_outputs(const std::vector<OutputFile>& files, std::ostream& out) {
  // Every file is complete on disk before the first one replaces its target, so a failure
  // while writing (a full disk) leaves all the targets as they were.
  std::vector<std::unique_ptr<TempFile>> written;
  for (const auto& f : files)
    if (!f.path.empty() && f.path != "-") {
      written.push_back(std::make_unique<TempFile>(f));
      written.back()->write();
    }
  std::vector<fs::path> folders;
  for (auto& t : written) {
    t->commit();
    if (std::find(folders.begin(), folders.end(), t->folder()) == folders.end()) folders.push_back(t->folder());
  }
  for (const auto& folder : folders) sync_folder(folder);
  for (const auto& f : files)
    if (f.path == "-") out << f.content;
}

void write_output(const std::string& path, std::string_view content, std::ostream& out, std::string_view option) {
  write_outputs({OutputFile{std::string(option), path, content}}, out);
}

void install_output_cleanup_handlers() {
  struct sigaction action {};
  action.sa_handler = remove_temporary_files_and_die;
  sigemptyset(&action.sa_mask);
  for (int sig : {SIGINT, SIGTERM, SIGHUP}) sigaddset(&action.sa_mask, sig);
  for (int sig : {SIGINT, SIGTERM, SIGHUP}) {
    struct sigaction previous {};
    ::sigaction(sig, nullptr, &previous);
    // A signal ignored at start (SIGHUP under nohup, SIGINT of a background job) stays ignored.
    if (previous.sa_handler == SIG_IGN) continue;
    ::sigaction(sig, &action, nullptr);
  }
}

}  // namespace netfold
