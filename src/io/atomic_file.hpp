// pcasweep/io/atomic_file.hpp — write a file so that readers never see half of it.
//
// Contract: the bytes go to "<path>.tmp-<pid>-<n>" in the same folder, are
// flushed, and the temporary is renamed onto <path>. On any failure the
// temporary is removed and pcasweep::Error (data) is thrown naming <path>;
// <path> is then either absent or holds its previous content.
#pragma once

#include <functional>
#include <string>
#include <string_view>

namespace pcasweep {

// Writes `bytes` to `path` atomically. Throws Error(data) on failure.
void write_file_atomic(const std::string& path, std::string_view bytes);

// Lets `produce(temporary_path)` write the file by any means (a C library
// that wants a file name, say), then renames it onto `path`. `produce`
// returns false (or throws) on failure; the temporary is then removed.
void write_via_temporary(const std::string& path,
                         const std::function<bool(const std::string& temporary_path)>& produce);

// Reads a whole file. Throws Error(data) "<path>: cannot read: <reason>".
std::string read_file(const std::string& path);

}  // namespace pcasweep
