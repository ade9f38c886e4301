// Writing a run's files: whole output folders swapped into place, single files replaced
// atomically, and clean-up of half-written output on SIGINT (docs/limits.md, "Output folders").
#pragma once

#include <string>
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

/// Writes the (name, content) files as the whole content of folder `dir`, with a manifest: they
/// are prepared in a new folder of a unique name beside `dir` (created exclusively, files opened
/// with O_EXCL and O_NOFOLLOW), then swapped into place in one rename, and the earlier run's
/// folder, stale files included, is removed. Runs into one folder, from other processes or
/// threads, take turns (a lock on the parent folder), so the folder always holds one whole run.
/// Names must be plain file names (safeFileStem). Returns the paths of the files written, the
/// manifest last. Throws InputError for an unusable folder (checkOutputFolder), Error when a
/// write fails (the folder is then left as it was).
std::vector<std::string> writeFiles(const std::string& dir,
                                    const std::vector<std::pair<std::string, std::string>>& files);

/// Replaces one file atomically: written under a unique temporary name beside it (O_EXCL,
/// O_NOFOLLOW), then renamed over it (a symbolic link at `path` is replaced, not followed).
/// Throws Error on failure, leaving no temporary file.
void writeFileAtomically(const std::string& path, const std::string& content);

/// For programs: on SIGINT, SIGTERM or SIGHUP, removes the output being prepared (temporary
/// folders and files of writeFiles and writeFileAtomically) and then dies of the signal as it
/// would have. Libraries and interpreters that handle signals themselves need not call it: a
/// write they interrupt by an exception cleans up after itself.
void installInterruptCleanup();

}  // namespace disc
