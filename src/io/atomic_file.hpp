// pcasweep/io/atomic_file.hpp — write a file so that readers never see half of it.
//
// Contract: the bytes go to "<path>.tmp-<pid>-<n>" in the same folder (created
// exclusively and registered with core/interrupt.hpp, so SIGINT/SIGTERM remove
// it), and the temporary is renamed onto <path> only when complete. On any
// failure the temporary is removed and pcasweep::Error (data) is thrown, one
// line naming <path> and the reason (strerror: "No space left on device",
// "File too large", "Not a directory", ...); <path> is then either absent or
// holds its previous content. Every file pcasweep writes goes through here.
// A path that exists and is neither a regular file nor a folder (/dev/null,
// /dev/full, a named pipe) is written in place instead: there is nothing to
// rename onto a device, and renaming would replace it with a regular file.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>
#include <vector>

namespace pcasweep {

// One file being written. Not copyable; used by one thread at a time.
class AtomicFile {
 public:
  // Creates the temporary beside `path`. Throws Error(data)
  // "<path>: cannot create a temporary file beside it: <reason>".
  explicit AtomicFile(std::string path);
  // Not committed (or commit failed): closes and removes the temporary.
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  // The final path, as given.
  const std::string& path() const { return path_; }

  // The temporary's descriptor, for a library that writes through one
  // (libsndfile's sf_open_fd). Do not mix with write() without flush().
  int fd() const { return fd_; }

  // Appends n bytes (buffered). Throws Error(data) "<path>: cannot write: <reason>".
  void write(const void* data, std::size_t n);
  void write(std::string_view bytes) { write(bytes.data(), bytes.size()); }

  // Hands the buffered bytes to the system. Throws like write().
  void flush();

  // Flushes, closes and renames the temporary onto path(). Throws Error(data)
  // "<path>: cannot write: <reason>" (the temporary is then removed).
  void commit();

 private:
  void fail(int err);  // throws; the destructor removes the temporary

  std::string path_, temporary_;
  int fd_ = -1;
  int slot_ = -1;
  bool committed_ = false;
  std::vector<char> buffer_;
};

// Writes `bytes` to `path` atomically. Throws Error(data) on failure.
void write_file_atomic(const std::string& path, std::string_view bytes);

// Copies the finished file `from` onto `to`, atomically, in bounded memory.
// Throws Error(data) "<from>: cannot read: <reason>" or as AtomicFile does.
void copy_file_atomic(const std::string& from, const std::string& to);

// Reads a whole file. Throws Error(data) "<path>: cannot read: <reason>".
std::string read_file(const std::string& path);

}  // namespace pcasweep
