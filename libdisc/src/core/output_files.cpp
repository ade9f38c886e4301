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

// Claims a slot for `path` (-1 when all are taken or the path is too long); the handler removes
// it until releaseSlot.
int claimSlot(const std::string& path, bool folder) {
  if (path.size() >= PATH_MAX) return -1;
  for (int k = 0; k < kSlots; ++k) {
    int expected = kFree;
    if (gSlots[k].state.compare_exchange_strong(expected, kClaimed)) {
      std::memcpy(gSlots[k].path, path.c_str(), path.size() + 1);
      gSlots[k].state.store(folder ? kFolder : kFile, std::memory_order_release);
      return k;
    }
  }
  return -1;
}

void releaseSlot(int slot) {
  if (slot >= 0) gSlots[slot].state.store(kFree, std::memory_order_release);
}

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

void writeAll(int fd, std::string_view content, const std::string& shown) {
  std::size_t done = 0;
  while (done < content.size()) {
    const ssize_t n = ::write(fd, content.data() + done, content.size() - done);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0)
      throw Error(fmt::format("failed writing '{}': {}", excerpt(shown),
                              n < 0 ? std::strerror(errno) : "no space written"));
    done += static_cast<std::size_t>(n);
  }
}

// On disk before the rename makes it visible, so a crash leaves the old file or the new one.
void syncFile(int fd, const std::string& shown) {
  if (::fsync(fd) != 0 && errno != EINVAL)
    throw Error(fmt::format("failed writing '{}': {}", excerpt(shown), std::strerror(errno)));
}

int createFileAt(int dirFd, const std::string& name, const std::string& shown) {
  const int fd =
      ::openat(dirFd, name.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_NOFOLLOW | O_CLOEXEC, 0666);
  if (fd < 0)
    throw Error(fmt::format("cannot create '{}': {}", excerpt(shown), std::strerror(errno)));
  return fd;
}

void checkFileName(const std::string& name) {
  // Names are file names, never paths: nothing is written outside the folder.
  if (name != safeFileStem(name) || name == kManifestName)
    throw InputError(fmt::format("'{}' is not a safe file name", excerpt(name)));
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

struct StagedFolder::State {
  Target target;
  FdGuard parent, tmp;
  std::string tmpName, tmpPath;
  int slot = -1;
  bool committed = false;
  struct File {
    std::string name;
    int fd = -1;  // open while written as the run goes
  };
  std::vector<File> files;

  File* find(const std::string& name) {
    for (auto& f : files)
      if (f.name == name) return &f;
    return nullptr;
  }
  File& openFile(const std::string& name) {
    File* f = find(name);
    if (!f || f->fd < 0) throw Error(fmt::format("'{}' is not open for writing", excerpt(name)));
    return *f;
  }
  void closeAll() {
    for (auto& f : files)
      if (f.fd >= 0) {
        ::close(f.fd);
        f.fd = -1;
      }
  }
};

StagedFolder::StagedFolder(const std::string& dir) : state_(std::make_unique<State>()) {
  State& s = *state_;
  s.target = splitTarget(dir);
  const Target& t = s.target;
  refuseWorkingFolder(t);
  makeParent(t);
  s.parent.fd = ::open(t.parent.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (s.parent.fd < 0)
    throw InputError(fmt::format("cannot open '{}': {}", excerpt(t.parent), std::strerror(errno)));
  inspectTarget(s.parent.fd, t);  // refused before anything is written
  for (int attempt = 0;; ++attempt) {
    s.tmpName = "." + t.name + ".tmp-" + randomSuffix();
    if (::mkdirat(s.parent.fd, s.tmpName.c_str(), 0777) == 0) break;
    if (errno != EEXIST || attempt > 100)
      throw Error(fmt::format("cannot create a temporary folder in '{}': {}", excerpt(t.parent),
                              std::strerror(errno)));
  }
  s.tmpPath = t.parent + "/" + s.tmpName;
  s.slot = claimSlot(s.tmpPath, true);
  s.tmp.fd =
      ::openat(s.parent.fd, s.tmpName.c_str(), O_RDONLY | O_DIRECTORY | O_NOFOLLOW | O_CLOEXEC);
  if (s.tmp.fd < 0) {
    const int err = errno;
    removeFlatFolder(s.tmpPath.c_str());
    releaseSlot(s.slot);
    throw Error(fmt::format("cannot open '{}': {}", excerpt(s.tmpPath), std::strerror(err)));
  }
}

StagedFolder::~StagedFolder() {
  State& s = *state_;
  s.closeAll();
  if (!s.committed) removeFlatFolder(s.tmpPath.c_str());
  releaseSlot(s.slot);
}

const std::string& StagedFolder::dir() const {
  return state_->target.shown;
}

std::string StagedFolder::pathOf(const std::string& name) const {
  return (fs::path(state_->target.shown) / name).string();
}

bool StagedFolder::has(const std::string& name) const {
  return state_->find(name) != nullptr;
}

void StagedFolder::open(const std::string& name) {
  State& s = *state_;
  if (s.committed) throw Error(fmt::format("'{}': the folder is already committed", dir()));
  checkFileName(name);
  if (s.find(name)) throw InputError(fmt::format("'{}' would be written twice", excerpt(name)));
  const int fd = createFileAt(s.tmp.fd, name, pathOf(name));
  s.files.push_back({name, fd});
}

void StagedFolder::append(const std::string& name, std::string_view data) {
  writeAll(state_->openFile(name).fd, data, pathOf(name));
}

void StagedFolder::close(const std::string& name) {
  State::File& f = state_->openFile(name);
  const int fd = f.fd;
  f.fd = -1;
  FdGuard guard{fd};
  syncFile(fd, pathOf(name));
}

void StagedFolder::add(const std::string& name, const std::string& content) {
  open(name);
  append(name, content);
  close(name);
}

void StagedFolder::discard(const std::string& name) {
  State& s = *state_;
  State::File* f = s.find(name);
  if (!f || s.committed) return;
  if (f->fd >= 0) ::close(f->fd);
  ::unlinkat(s.tmp.fd, name.c_str(), 0);
  s.files.erase(s.files.begin() + (f - s.files.data()));
}

std::vector<std::string> StagedFolder::commit() {
  State& s = *state_;
  const Target& t = s.target;
  if (s.committed) throw Error(fmt::format("'{}': the folder is already committed", dir()));
  for (const auto& f : s.files)
    if (f.fd >= 0) throw Error(fmt::format("'{}' is still being written", excerpt(pathOf(f.name))));
  std::vector<std::string> written;
  std::string manifest = fmt::format(
      "# The files of one run, written together by libdisc {}; the next run into this folder\n"
      "# replaces the folder whole.\n",
      kVersion);
  for (const auto& f : s.files) {
    manifest += f.name + "\n";
    written.push_back(pathOf(f.name));
  }
  {
    FdGuard m{createFileAt(s.tmp.fd, kManifestName, pathOf(kManifestName))};
    writeAll(m.fd, manifest, pathOf(kManifestName));
    syncFile(m.fd, pathOf(kManifestName));
  }
  written.push_back(pathOf(kManifestName));
  ::fsync(s.tmp.fd);
  // Runs into folders of one parent take turns from here to the swap (flock: between processes
  // and between threads alike, each open file being its own lock holder); the folder is judged
  // again under the lock, as another run may have replaced it meanwhile. The lock goes with
  // the parent's descriptor (the destructor).
  while (::flock(s.parent.fd, LOCK_EX) != 0)
    if (errno != EINTR)
      throw Error(fmt::format("cannot lock '{}': {}", excerpt(t.parent), std::strerror(errno)));
  const bool exists = inspectTarget(s.parent.fd, t);
  const int pfd = s.parent.fd;
  int rc;
  if (exists) {
    // One atomic exchange: the folder is the old run's or the new one's at every instant.
    rc = ::renameat2(pfd, s.tmpName.c_str(), pfd, t.name.c_str(), RENAME_EXCHANGE);
    if (rc != 0 && (errno == EINVAL || errno == ENOSYS)) {
      // A file system without the exchange: move the old folder aside first (for a moment the
      // folder is missing, never mixed).
      const std::string aside = "." + t.name + ".old-" + randomSuffix();
      rc = ::renameat(pfd, t.name.c_str(), pfd, aside.c_str());
      if (rc == 0) {
        rc = ::renameat(pfd, s.tmpName.c_str(), pfd, t.name.c_str());
        if (rc != 0)
          ::renameat(pfd, aside.c_str(), pfd, t.name.c_str());
        else
          ::renameat(pfd, aside.c_str(), pfd, s.tmpName.c_str());
      }
    }
  } else {
    rc = ::renameat(pfd, s.tmpName.c_str(), pfd, t.name.c_str());
  }
  if (rc != 0)
    throw Error(
        fmt::format("cannot move the output into '{}': {}", excerpt(dir()), std::strerror(errno)));
  ::fsync(pfd);
  // The temporary name now holds the earlier run's folder, stale files and all (or nothing).
  s.committed = true;
  ::flock(pfd, LOCK_UN);
  if (exists) removeFlatFolder(s.tmpPath.c_str());
  return written;
}

std::vector<std::string> writeFiles(const std::string& dir,
                                    const std::vector<std::pair<std::string, std::string>>& files) {
  std::set<std::string> names;
  for (const auto& [name, content] : files) {
    checkFileName(name);  // refused before anything is written
    if (!names.insert(name).second)
      throw InputError(fmt::format("'{}' would be written twice", excerpt(name)));
  }
  StagedFolder folder(dir);
  for (const auto& [name, content] : files) folder.add(name, content);
  return folder.commit();
}

StagedFile::StagedFile(const std::string& path) : path_(path) {
  const fs::path p(path);
  const std::string name = p.filename().string();
  if (name.empty() || name == "." || name == "..")
    throw Error(fmt::format("'{}' is not a file name", excerpt(path)));
  const fs::path folder = p.parent_path().empty() ? fs::path(".") : p.parent_path();
  for (int attempt = 0; fd_ < 0; ++attempt) {
    tmp_ = (folder / ("." + name + ".tmp-" + randomSuffix())).string();
    fd_ = ::open(tmp_.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_NOFOLLOW | O_CLOEXEC, 0666);
    if (fd_ < 0 && (errno != EEXIST || attempt > 100))
      throw Error(fmt::format("cannot write '{}': {}", excerpt(path), std::strerror(errno)));
  }
  slot_ = claimSlot(tmp_, false);
}

StagedFile::~StagedFile() {
  if (fd_ >= 0) {
    ::close(fd_);
    ::unlink(tmp_.c_str());
  }
  releaseSlot(slot_);
}

void StagedFile::append(std::string_view data) {
  if (fd_ < 0) throw Error(fmt::format("'{}' is already committed", excerpt(path_)));
  writeAll(fd_, data, path_);
}

void StagedFile::commit() {
  if (fd_ < 0) throw Error(fmt::format("'{}' is already committed", excerpt(path_)));
  syncFile(fd_, path_);
  const bool closed = ::close(fd_) == 0;
  fd_ = -1;
  if (!closed || std::rename(tmp_.c_str(), path_.c_str()) != 0) {
    const int err = errno;
    ::unlink(tmp_.c_str());
    throw Error(fmt::format("cannot move '{}' into place: {}", excerpt(path_), std::strerror(err)));
  }
}

void writeFileAtomically(const std::string& path, const std::string& content) {
  StagedFile file(path);
  file.append(content);
  file.commit();
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
