// Reading untrusted files and quoting untrusted text.
#include "core/safe_io.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <fmt/format.h>
#include <cerrno>
#include <climits>
#include <cstdlib>
#include <cstring>

#include "disc/error.hpp"
#include "disc/limits.hpp"

namespace disc {

bool validName(const std::string& name) {
  if (name.empty() || name.size() > InputLimits::kNameLength) return false;
  auto alnum = [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9');
  };
  if (!alnum(name[0]) && name[0] != '_') return false;
  for (char c : name)
    if (!alnum(c) && c != '_' && c != '-' && c != '.' && c != '+') return false;
  return true;
}

std::string safeFileStem(const std::string& name) {
  std::string out;
  for (char c : name.substr(0, InputLimits::kNameLength)) {
    const bool keep = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                      c == '_' || c == '-' || c == '.' || c == '+';
    out += keep ? c : '_';
  }
  if (out.empty() || out[0] == '.') out.insert(out.begin(), '_');
  return out;
}

std::string excerpt(const std::string& text, std::size_t max) {
  std::string out;
  std::size_t shown = 0, k = 0;
  while (k < text.size() && shown < max) {
    const auto c = static_cast<unsigned char>(text[k]);
    // Copy a whole well-formed UTF-8 sequence, or escape the byte.
    std::size_t len = c < 0x80         ? 1
                      : (c >> 5) == 6  ? 2
                      : (c >> 4) == 14 ? 3
                      : (c >> 3) == 30 ? 4
                                       : 0;
    if (len > 1 &&
        (k + len > text.size() || detail::invalidUtf8At(text.substr(k, len)) != std::string::npos))
      len = 0;
    if (len == 1 && ((c < 0x20 && c != '\t') || c == 0x7f)) len = 0;
    if (len == 0) {
      out += fmt::format("\\x{:02x}", c);
      ++k;
    } else {
      out.append(text, k, len);
      k += len;
    }
    ++shown;
  }
  if (k < text.size()) out += "...";
  return out;
}

std::string boundedMessage(const std::string& message, std::size_t maxLength) {
  std::string out;
  std::size_t k = 0;
  while (k < message.size() && out.size() < maxLength) {
    const std::size_t open = message.find('\'', k);
    const std::size_t close =
        open == std::string::npos ? std::string::npos : message.find('\'', open + 1);
    const std::size_t plainEnd = close == std::string::npos ? message.size() : open + 1;
    // Plain text keeps its newlines and tabs (multi-line messages); other control bytes and
    // broken UTF-8 are escaped piece by piece.
    std::size_t a = k;
    while (a < plainEnd) {
      std::size_t b = a;
      while (b < plainEnd && message[b] != '\n') ++b;
      out += excerpt(message.substr(a, b - a), std::string::npos);
      if (b < plainEnd) {
        out += '\n';
        ++b;
      }
      a = b;
    }
    if (close == std::string::npos) break;
    out += excerpt(message.substr(open + 1, close - open - 1)) + "'";
    k = close + 1;
  }
  if (out.size() >= maxLength && k < message.size()) out += " ...";
  return out;
}

namespace detail {

std::string readInputFile(const std::string& path, std::size_t maxBytes, const char* what) {
  // O_NONBLOCK: opening a FIFO must not wait for a writer; the descriptor's own type is
  // checked, so a file swapped between a check and the open cannot slip through.
  const int fd = ::open(path.c_str(), O_RDONLY | O_NONBLOCK | O_CLOEXEC | O_NOCTTY);
  if (fd < 0)
    throw InputError(
        fmt::format("{}: cannot open the {}: {}", excerpt(path), what, std::strerror(errno)));
  struct FdCloser {
    int fd;
    ~FdCloser() { ::close(fd); }
  } closer{fd};
  struct stat st {};
  if (::fstat(fd, &st) != 0)
    throw InputError(fmt::format("{}: cannot read the {}", excerpt(path), what));
  if (!S_ISREG(st.st_mode)) {
    const char* kind = S_ISDIR(st.st_mode)                          ? "a directory"
                       : S_ISFIFO(st.st_mode)                       ? "a FIFO (named pipe)"
                       : S_ISCHR(st.st_mode) || S_ISBLK(st.st_mode) ? "a device"
                       : S_ISSOCK(st.st_mode)                       ? "a socket"
                                                                    : "not a regular file";
    throw InputError(
        fmt::format("{}: the {} is {}; give a regular file", excerpt(path), what, kind));
  }
  if (static_cast<std::size_t>(st.st_size) > maxBytes)
    throw InputError(fmt::format("{}: the {} has {} bytes, above the limit of {} bytes",
                                 excerpt(path), what, st.st_size, maxBytes));
  ::fcntl(fd, F_SETFL, ::fcntl(fd, F_GETFL) & ~O_NONBLOCK);
  std::string text;
  text.resize(static_cast<std::size_t>(st.st_size));
  std::size_t got = 0;
  while (got < text.size()) {
    const ssize_t n = ::read(fd, text.data() + got, text.size() - got);
    if (n < 0 && errno == EINTR) continue;
    if (n < 0)
      throw InputError(
          fmt::format("{}: error reading the {}: {}", excerpt(path), what, std::strerror(errno)));
    if (n == 0) break;  // the file shrank while being read
    got += static_cast<std::size_t>(n);
  }
  text.resize(got);
  return text;
}

std::string realPath(const std::string& path) {
  char buf[PATH_MAX];
  if (::realpath(path.c_str(), buf) == nullptr) return "";
  return buf;
}

bool insideFolder(const std::string& path, const std::string& folder) {
  if (folder.empty() || path.size() <= folder.size()) return false;
  if (folder == "/") return true;
  return path.compare(0, folder.size(), folder) == 0 && path[folder.size()] == '/';
}

std::size_t invalidUtf8At(const std::string& text) {
  const auto* s = reinterpret_cast<const unsigned char*>(text.data());
  const std::size_t n = text.size();
  std::size_t k = 0;
  while (k < n) {
    const unsigned char c = s[k];
    if (c < 0x80) {
      ++k;
      continue;
    }
    std::size_t len;
    unsigned lo = 0x80, hi = 0xbf;  // the allowed range of the second byte
    if (c >= 0xc2 && c <= 0xdf)
      len = 2;
    else if (c >= 0xe0 && c <= 0xef) {
      len = 3;
      if (c == 0xe0) lo = 0xa0;  // overlong
      if (c == 0xed) hi = 0x9f;  // surrogates
    } else if (c >= 0xf0 && c <= 0xf4) {
      len = 4;
      if (c == 0xf0) lo = 0x90;  // overlong
      if (c == 0xf4) hi = 0x8f;  // above U+10FFFF
    } else
      return k;
    if (k + len > n) return k;
    if (s[k + 1] < lo || s[k + 1] > hi) return k;
    for (std::size_t j = 2; j < len; ++j)
      if ((s[k + j] & 0xc0) != 0x80) return k;
    k += len;
  }
  return std::string::npos;
}

bool stripBom(std::string& text) {
  if (text.rfind("\xef\xbb\xbf", 0) != 0) return false;
  text.erase(0, 3);
  return true;
}

void lineColumnOf(const std::string& text, std::size_t offset, int& line, int& column) {
  line = 1;
  column = 1;
  for (std::size_t k = 0; k < offset && k < text.size(); ++k) {
    if (text[k] == '\n') {
      ++line;
      column = 1;
    } else {
      ++column;
    }
  }
}

}  // namespace detail
}  // namespace disc
