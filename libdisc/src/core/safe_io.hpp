// Reading untrusted files and quoting untrusted text (private).
#pragma once

#include <cstddef>
#include <string>

namespace disc::detail {

/// The whole of a regular file of at most `maxBytes`. Refuses directories, FIFOs, devices and
/// sockets (opened without blocking, checked on the open descriptor) and larger files, with an
/// InputError naming `what` ("netlist", "include file", ...) and the path.
std::string readInputFile(const std::string& path, std::size_t maxBytes, const char* what);

/// The real path (symlinks and `..` resolved) of an existing file, or "" when it has none.
std::string realPath(const std::string& path);
/// True when real path `path` lies inside real folder `folder`.
bool insideFolder(const std::string& path, const std::string& folder);

/// Offset of the first byte that is not part of well-formed UTF-8 (overlong forms, surrogates
/// and code points above U+10FFFF included), or npos.
std::size_t invalidUtf8At(const std::string& text);
/// Removes a leading UTF-8 byte-order mark; returns whether there was one.
bool stripBom(std::string& text);
/// 1-based line and byte column of an offset.
void lineColumnOf(const std::string& text, std::size_t offset, int& line, int& column);

}  // namespace disc::detail
