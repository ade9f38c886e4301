// Whole output folders swapped into place, atomic single files, and their clean-up on a signal.
#include <dirent.h>
#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <fmt/format.h>
#include <algorithm>
#include <atomic>
#include <cerrno>
#include <climits>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <random>
#include <set>

#include "core/safe_io.hpp"
#include "disc/error.hpp"
#include "disc/files.hpp"
#include "disc/limits.hpp"
#include "disc/version.hpp"

namespace disc {

namespace {

namespace fs = std::filesystem;

// --- What a signal handler must remove -----------------------------------------------------
// Fixed slots written before they are armed, so the handler reads them without locks or
// allocation. More concurrent writes than slots are still written, only not cleaned on a signal.
constexpr int kSlots = 32;
enum SlotState : int { kFree = 0, kClaimed = 1, kFolder = 2, kFile = 3 };
struct Slot {
  std::atomic<int> state{kFree};
  char path[PATH_MAX];
};
Slot gSlots[kSlots];

class PendingOutput {
 public:
  PendingOutput(const std::string& path, bool folder) {
    if (path.size() >= PATH_MAX) return;
    for (int k = 0; k < kSlots; ++k) {
      int expected = kFree;
      if (gSlots[k].state.compare_exchange_strong(expected, kClaimed)) {
        std::memcpy(gSlots[k].path, path.c_str(), path.size() + 1);
        gSlots[k].state.store(folder ? kFolder : kFile, std::memory_order_release);
        slot_ = k;
        return;
      }
    }
  }
  ~PendingOutput() {
    if (slot_ >= 0) gSlots[slot_].state.store(kFree, std::memory_order_release);
  }
  PendingOutput(const PendingOutput&) = delete;
  PendingOutput& operator=(const PendingOutput&) = delete;

 private:
  int slot_ = -1;
};

// Removes a folder of plain files (no subfolders: the folders written here hold none) with
// async-signal-safe calls only, so the signal handler can use it. Links are removed, never
// followed.
void removeFlatFolder(const char* path) {
  const int fd = ::open(path, O_RDONLY | O_DIRECTORY | O_NOFOLLOW | O_CLOEXEC);
  if (fd < 0) return;
  alignas(8) char buf[4096];
  for (;;) {
    // Removing entries while reading shifts the listing: read from the start until none is left.
    ::lseek(fd, 0, SEEK_SET);
    bool removed = false;
    const ssize_t n = ::getdents64(fd, buf, sizeof buf);
    for (ssize_t off = 0; off < n;) {
      const auto* e = reinterpret_cast<const struct dirent64*>(buf + off);
      off += e->d_reclen;
      const char* name = e->d_name;
      if (name[0] == '.' && (name[1] == 0 || (name[1] == '.' && name[2] == 0))) continue;
      if (::unlinkat(fd, name, 0) == 0) removed = true;
    }
    if (!removed) break;
  }
  ::close(fd);
  ::rmdir(path);
}

extern "C" void removePendingOutputAndDie(int sig) {
  for (auto& slot : gSlots) {
    const int state = slot.state.load(std::memory_order_acquire);
    if (state == kFolder)
      removeFlatFolder(slot.path);
    else if (state == kFile)
      ::unlink(slot.path);
  }
  // Die of the signal as without the handler, so the parent sees the usual status.
  ::signal(sig, SIG_DFL);
  ::raise(sig);
}

// --- Names -----------------------------------------------------------------------------------

std::string randomSuffix() {
  static const char kAlphabet[] = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789";
  thread_local std::mt19937_64 rng{(static_cast<std::uint64_t>(std::random_device{}()) << 32) ^
                                   static_cast<std::uint64_t>(::getpid())};
  std::string s(10, ' ');
  for (char& c : s) c = kAlphabet[rng() % (sizeof kAlphabet - 1)];
  return s;
}

struct FdGuard {
  int fd = -1;
  ~FdGuard() {
    if (fd >= 0) ::close(fd);
  }
};

struct Target {
  std::string shown;   // as the user gave it
  std::string parent;  // absolute
  std::string name;    // the folder's own name
};

Target splitTarget(const std::string& dir) {
  if (dir.empty()) throw InputError("the output folder name is empty");
  std::error_code ec;
  fs::path p = fs::absolute(dir, ec).lexically_normal();
  if (ec) throw InputError(fmt::format("'{}': not a usable folder name", excerpt(dir)));
  if (!p.has_filename()) p = p.parent_path();  // "out/" names "out"
  const std::string name = p.filename().string();
  if (name.empty() || name == "." || name == "..")
    throw InputError(fmt::format(
        "'{}' cannot be an output folder: give a named folder such as out/run", excerpt(dir)));
  return {dir, p.parent_path().string(), name};
}

// Refuses the working folder and its ancestors: replacing them would pull the folder away from
// under the user (and their other files).
void refuseWorkingFolder(const Target& t) {
  const std::string cwd = detail::realPath(".");
  const std::string parent = detail::realPath(t.parent);
  if (cwd.empty() || parent.empty()) return;
  const std::string target = (parent == "/" ? "" : parent) + "/" + t.name;
  if (cwd == target || detail::insideFolder(cwd, target))
    throw InputError(fmt::format(
        "'{}' is the working folder or holds it: give a folder inside it, such as out/run",
        excerpt(t.shown)));
}

void makeParent(const Target& t) {
  std::error_code ec;
  fs::create_directories(t.parent, ec);
  if (ec)
    throw InputError(fmt::format("cannot create the folder '{}' for the output: {}",
                                 excerpt(t.parent), ec.message()));
  if (::access(t.parent.c_str(), W_OK | X_OK) != 0)
    throw InputError(fmt::format("cannot write into '{}' (for the output folder '{}'): {}",
                                 excerpt(t.parent), excerpt(t.shown), std::strerror(errno)));
}

/// The names an earlier run's manifest lists (and whether there is one).
bool readManifest(int dirFd, std::set<std::string>& names) {
  // O_NOFOLLOW: a manifest that is a link marks nothing.
  const int fd = ::openat(dirFd, kManifestName, O_RDONLY | O_NOFOLLOW | O_NONBLOCK | O_CLOEXEC);
  if (fd < 0) return false;
  FdGuard guard{fd};
  struct stat st {};
  if (::fstat(fd, &st) != 0 || !S_ISREG(st.st_mode) || st.st_size > (1 << 20)) return false;
  std::string text(static_cast<std::size_t>(st.st_size), '\0');
  const ssize_t n = ::read(fd, text.data(), text.size());
  if (n < 0) return false;
  text.resize(static_cast<std::size_t>(n));
  std::size_t k = 0;
  while (k < text.size()) {
    std::size_t e = text.find('\n', k);
    if (e == std::string::npos) e = text.size();
    const std::string line = text.substr(k, e - k);
    if (!line.empty() && line[0] != '#') names.insert(line);
    k = e + 1;
  }
  return true;
}

/// Throws InputError unless the target is missing, empty or wholly an earlier run's; returns
/// whether it exists.
bool inspectTarget(int parentFd, const Target& t) {
  struct stat st {};
  if (::fstatat(parentFd, t.name.c_str(), &st, AT_SYMLINK_NOFOLLOW) != 0) {
    if (errno == ENOENT) return false;
    throw InputError(fmt::format("cannot inspect the output folder '{}': {}", excerpt(t.shown),
                                 std::strerror(errno)));
  }
  if (S_ISLNK(st.st_mode))
    throw InputError(fmt::format(
        "the output folder '{}' is a symbolic link: give the folder it points to, or a new name",
        excerpt(t.shown)));
  if (!S_ISDIR(st.st_mode))
    throw InputError(fmt::format("'{}' exists and is not a folder: give another output folder",
                                 excerpt(t.shown)));
  const int fd =
      ::openat(parentFd, t.name.c_str(), O_RDONLY | O_DIRECTORY | O_NOFOLLOW | O_CLOEXEC);
  if (fd < 0)
    throw InputError(fmt::format("cannot open the output folder '{}': {}", excerpt(t.shown),
                                 std::strerror(errno)));
  std::set<std::string> listed;
  std::vector<std::string> entries;
  DIR* d = ::fdopendir(fd);
  if (d == nullptr) {
    ::close(fd);
    throw InputError(fmt::format("cannot list the output folder '{}'", excerpt(t.shown)));
  }
  while (const dirent* e = ::readdir(d)) {
    const std::string name = e->d_name;
    if (name != "." && name != "..") entries.push_back(name);
  }
  const bool manifest = readManifest(::dirfd(d), listed);
  ::closedir(d);
  if (entries.empty()) return true;
  std::vector<std::string> foreign;
  for (const auto& e : entries) {
    struct stat es {};
    const std::string path = t.parent + "/" + t.name + "/" + e;
    const bool dirEntry = ::lstat(path.c_str(), &es) == 0 && S_ISDIR(es.st_mode);
    if (!manifest || dirEntry || (e != kManifestName && !listed.count(e))) foreign.push_back(e);
  }
  if (foreign.empty()) return true;
  std::sort(foreign.begin(), foreign.end());
  std::string shown;
  for (std::size_t k = 0; k < foreign.size() && k < 3; ++k)
    shown += (k ? ", '" : "'") + excerpt(foreign[k], 40) + "'";
  if (foreign.size() > 3) shown += fmt::format(" and {} more", foreign.size() - 3);
  throw InputError(fmt::format(
      "the output folder '{}' holds {} that no disc run wrote there ({}; it {}); a run replaces "
      "its folder whole, so give a new or empty folder, or move those files away",
      excerpt(t.shown), foreign.size() == 1 ? "an entry" : "entries", shown,
      manifest ? fmt::format("is not in {}", kManifestName)
               : fmt::format("has no {}", kManifestName)));
}

void writeAll(int fd, const std::string& content, const std::string& shown) {
  std::size_t done = 0;
  while (done < content.size()) {
    const ssize_t n = ::write(fd, content.data() + done, content.size() - done);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0)
      throw Error(fmt::format("failed writing '{}': {}", excerpt(shown),
                              n < 0 ? std::strerror(errno) : "no space written"));
    done += static_cast<std::size_t>(n);
  }
  // On disk before the rename makes it visible, so a crash leaves the old file or the new one.
  if (::fsync(fd) != 0 && errno != EINVAL)
    throw Error(fmt::format("failed writing '{}': {}", excerpt(shown), std::strerror(errno)));
}

void writeNewFileAt(int dirFd, const std::string& name, const std::string& content,
                    const std::string& shown) {
  const int fd =
      ::openat(dirFd, name.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_NOFOLLOW | O_CLOEXEC, 0666);
  if (fd < 0)
    throw Error(fmt::format("cannot create '{}': {}", excerpt(shown), std::strerror(errno)));
  FdGuard guard{fd};
  writeAll(fd, content, shown);
}

}  // namespace

void checkOutputFolder(const std::string& dir) {
  const Target t = splitTarget(dir);
  refuseWorkingFolder(t);
  makeParent(t);
  const int parentFd = ::open(t.parent.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (parentFd < 0)
    throw InputError(fmt::format("cannot open '{}': {}", excerpt(t.parent), std::strerror(errno)));
  FdGuard guard{parentFd};
  inspectTarget(parentFd, t);
}

std::vector<std::string> writeFiles(const std::string& dir,
                                    const std::vector<std::pair<std::string, std::string>>& files) {
  std::set<std::string> names;
  for (const auto& [name, content] : files) {
    // Names are file names, never paths: nothing is written outside `dir`.
    if (name != safeFileStem(name) || name == kManifestName)
      throw InputError(fmt::format("'{}' is not a safe file name", excerpt(name)));
    if (!names.insert(name).second)
      throw InputError(fmt::format("'{}' would be written twice", excerpt(name)));
  }
  const Target t = splitTarget(dir);
  refuseWorkingFolder(t);
  makeParent(t);
  FdGuard parent{::open(t.parent.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC)};
  if (parent.fd < 0)
    throw InputError(fmt::format("cannot open '{}': {}", excerpt(t.parent), std::strerror(errno)));
  inspectTarget(parent.fd, t);  // refused before anything is written

  std::string tmpName;
  for (int attempt = 0;; ++attempt) {
    tmpName = "." + t.name + ".tmp-" + randomSuffix();
    if (::mkdirat(parent.fd, tmpName.c_str(), 0777) == 0) break;
    if (errno != EEXIST || attempt > 100)
      throw Error(fmt::format("cannot create a temporary folder in '{}': {}", excerpt(t.parent),
                              std::strerror(errno)));
  }
  const std::string tmpPath = t.parent + "/" + tmpName;
  PendingOutput pending(tmpPath, true);
  std::vector<std::string> written;
  bool exists = false;
  try {
    FdGuard tmp{
        ::openat(parent.fd, tmpName.c_str(), O_RDONLY | O_DIRECTORY | O_NOFOLLOW | O_CLOEXEC)};
    if (tmp.fd < 0)
      throw Error(fmt::format("cannot open '{}': {}", excerpt(tmpPath), std::strerror(errno)));
    std::string manifest = fmt::format(
        "# The files of one run, written together by libdisc {}; the next run into this folder\n"
        "# replaces the folder whole.\n",
        kVersion);
    for (const auto& [name, content] : files) {
      const std::string path = (fs::path(dir) / name).string();
      writeNewFileAt(tmp.fd, name, content, path);
      manifest += name + "\n";
      written.push_back(path);
    }
    writeNewFileAt(tmp.fd, kManifestName, manifest, (fs::path(dir) / kManifestName).string());
    written.push_back((fs::path(dir) / kManifestName).string());
    ::fsync(tmp.fd);
    // Runs into folders of one parent take turns from here to the swap (flock: between processes
    // and between threads alike, each open file being its own lock holder); the folder is
    // judged again under the lock, as another run may have replaced it meanwhile.
    while (::flock(parent.fd, LOCK_EX) != 0)
      if (errno != EINTR)
        throw Error(fmt::format("cannot lock '{}': {}", excerpt(t.parent), std::strerror(errno)));
    exists = inspectTarget(parent.fd, t);
    int rc;
    if (exists) {
      // One atomic exchange: the folder is the old run's or the new one's at every instant.
      rc = ::renameat2(parent.fd, tmpName.c_str(), parent.fd, t.name.c_str(), RENAME_EXCHANGE);
      if (rc != 0 && (errno == EINVAL || errno == ENOSYS)) {
        // A file system without the exchange: move the old folder aside first (for a moment
        // the folder is missing, never mixed).
        const std::string aside = "." + t.name + ".old-" + randomSuffix();
        rc = ::renameat(parent.fd, t.name.c_str(), parent.fd, aside.c_str());
        if (rc == 0) {
          rc = ::renameat(parent.fd, tmpName.c_str(), parent.fd, t.name.c_str());
          if (rc != 0)
            ::renameat(parent.fd, aside.c_str(), parent.fd, t.name.c_str());
          else
            ::renameat(parent.fd, aside.c_str(), parent.fd, tmpName.c_str());
        }
      }
    } else {
      rc = ::renameat(parent.fd, tmpName.c_str(), parent.fd, t.name.c_str());
    }
    if (rc != 0)
      throw Error(
          fmt::format("cannot move the output into '{}': {}", excerpt(dir), std::strerror(errno)));
    ::fsync(parent.fd);
  } catch (...) {
    removeFlatFolder(tmpPath.c_str());
    throw;
  }
  // The temporary name now holds the earlier run's folder, stale files and all.
  if (exists) removeFlatFolder(tmpPath.c_str());
  return written;
}

void writeFileAtomically(const std::string& path, const std::string& content) {
  const fs::path p(path);
  const std::string name = p.filename().string();
  if (name.empty() || name == "." || name == "..")
    throw Error(fmt::format("'{}' is not a file name", excerpt(path)));
  const fs::path folder = p.parent_path().empty() ? fs::path(".") : p.parent_path();
  std::string tmp;
  int fd = -1;
  for (int attempt = 0; fd < 0; ++attempt) {
    tmp = (folder / ("." + name + ".tmp-" + randomSuffix())).string();
    fd = ::open(tmp.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_NOFOLLOW | O_CLOEXEC, 0666);
    if (fd < 0 && (errno != EEXIST || attempt > 100))
      throw Error(fmt::format("cannot write '{}': {}", excerpt(path), std::strerror(errno)));
  }
  PendingOutput pending(tmp, false);
  try {
    FdGuard guard{fd};
    writeAll(fd, content, path);
  } catch (...) {
    ::unlink(tmp.c_str());
    throw;
  }
  if (std::rename(tmp.c_str(), path.c_str()) != 0) {
    const int err = errno;
    ::unlink(tmp.c_str());
    throw Error(fmt::format("cannot move '{}' into place: {}", excerpt(path), std::strerror(err)));
  }
}

void installInterruptCleanup() {
  for (int sig : {SIGINT, SIGTERM, SIGHUP}) {
    struct sigaction old {};
    ::sigaction(sig, nullptr, &old);
    if (old.sa_handler == SIG_IGN) continue;  // nohup and the like keep ignoring it
    struct sigaction sa {};
    sa.sa_handler = removePendingOutputAndDie;
    sigemptyset(&sa.sa_mask);
    ::sigaction(sig, &sa, nullptr);
  }
}

}  // namespace disc
