// Writing a run's files: whole output folders swapped into place, single files replaced
// atomically, and clean-up of half-written output on SIGINT (docs/limits.md, "Output folders").
#pragma once

#include <memory>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace disc {

/// The file that marks a folder as written by one libdisc run, listing its files. A folder
/// holding anything else is never replaced.
inline constexpr const char* kManifestName = "disc-manifest.txt";

/// Throws InputError unless `dir` can take a run's files: its parent can be created and
/// written, and `dir` is missing, an empty folder, or a folder an earlier run wrote (its
/// manifest lists every entry in it), and not a symbolic link, the working folder or one of its
/// ancestors. Call it before a long run, so an unusable folder is refused up front.
void checkOutputFolder(const std::string& dir);

/// A run's output folder while it is being prepared. The constructor refuses an unusable
/// `dir` (InputError, the rules of checkOutputFolder) and creates a new folder of a unique name
/// beside it (exclusively; files in it are opened with O_EXCL and O_NOFOLLOW). Files are added
/// whole (add) or written piece by piece as a run goes (open, append, close). commit() writes
/// the manifest and swaps the folder into place in one rename, removing the earlier run's folder
/// with its stale files; runs into one folder, from other processes or threads, take turns (a
/// lock on the parent folder), so `dir` always holds one whole run. Until then `dir` is left as
/// it was: the destructor, an exception or a signal (installInterruptCleanup) removes the
/// prepared folder. Names must be plain file names (safeFileStem).
class StagedFolder {
 public:
  explicit StagedFolder(const std::string& dir);
  ~StagedFolder();
  StagedFolder(const StagedFolder&) = delete;
  StagedFolder& operator=(const StagedFolder&) = delete;

  /// Adds a file with its whole content.
  void add(const std::string& name, const std::string& content);
  /// Starts a file written as a run goes; append() writes to it, close() ends it.
  void open(const std::string& name);
  void append(const std::string& name, std::string_view data);
  void close(const std::string& name);
  /// Removes a file not closed (a run that stopped half way), so no partial file is committed.
  void discard(const std::string& name);
  /// Whether `name` was added, or opened and not discarded.
  bool has(const std::string& name) const;
  /// The path `name` has once committed, as the user named the folder ("out/run/report.json").
  std::string pathOf(const std::string& name) const;
  const std::string& dir() const;
  /// Writes the manifest and swaps the folder into place (once; every opened file closed).
  /// Returns the paths of the files, in the order added, the manifest last. Throws Error when
  /// a write fails (`dir` is then left as it was).
  std::vector<std::string> commit();

 private:
  struct State;
  std::unique_ptr<State> state_;
};

/// Writes the (name, content) files as the whole content of folder `dir`, with a manifest,
/// through a StagedFolder. Returns the paths of the files written, the manifest last. Throws
/// InputError for an unusable folder or a name that is not a plain file name, Error when a
/// write fails (the folder is then left as it was).
std::vector<std::string> writeFiles(const std::string& dir,
                                    const std::vector<std::pair<std::string, std::string>>& files);

/// One file being prepared under a unique temporary name beside `path` (O_EXCL, O_NOFOLLOW),
/// moved over `path` by commit() (a symbolic link at `path` is replaced, not followed). The
/// destructor, an exception or a signal (installInterruptCleanup) removes the temporary file.
class StagedFile {
 public:
  explicit StagedFile(const std::string& path);
  ~StagedFile();
  StagedFile(const StagedFile&) = delete;
  StagedFile& operator=(const StagedFile&) = delete;
  void append(std::string_view data);
  void commit();
  const std::string& path() const { return path_; }

 private:
  std::string path_, tmp_;
  int fd_ = -1;
  int slot_ = -1;  // the signal handler's record of tmp_
};

/// Replaces one file atomically (a StagedFile). Throws Error on failure, leaving no temporary
/// file.
void writeFileAtomically(const std::string& path, const std::string& content);

/// For programs: on SIGINT, SIGTERM or SIGHUP, removes the output being prepared (temporary
/// folders and files of StagedFolder and StagedFile) and then dies of the signal as it
/// would have. Libraries and interpreters that handle signals themselves need not call it: a
/// write they interrupt by an exception cleans up after itself.
void installInterruptCleanup();

}  // namespace disc
