// pcasweep/fuzz/fuzz_support.hpp — what every libFuzzer harness in fuzz/ shares.
//
// Contract: a harness hands libFuzzer's bytes to one reader through
// refused_or_read(). A pcasweep::Error is the reader's one allowed way to say
// no (a damaged or hostile file is refused with a message); anything else —
// another exception (std::bad_alloc included), a sanitizer report, a leak, a
// hang, a single allocation above -malloc_limit_mb — escapes and is a finding.
// Readers that take a path (the recordings) get the bytes through
// ScratchFile: one file per process in /dev/shm (or $TMPDIR), rewritten for
// each input and removed when the process ends.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <string_view>
#include <unistd.h>

#include "core/error.hpp"

namespace pcasweep::fuzz {

// Runs `read` (any callable); returns true if it returned, false if it refused
// with pcasweep::Error. Other exceptions propagate (libFuzzer reports them).
template <class Read>
bool refused_or_read(Read&& read) {
  try {
    read();
    return true;
  } catch (const pcasweep::Error&) {
    return false;
  }
}

// The bytes libFuzzer passes, as the std::string the readers take.
inline std::string as_bytes(const std::uint8_t* data, std::size_t size) {
  return std::string(reinterpret_cast<const char*>(data), size);
}

// `bytes` with its last 4 bytes replaced by the CRC-32 (little-endian) of everything before
// them, as our container and basis file store it: a mutated file then gets past the checksum
// and reaches the parser behind it (an input shorter than 4 bytes is returned as it is).
std::string with_crc_trailer(std::string_view bytes);

// One scratch file per process with a fixed extension (the readers choose the
// format by it). write() replaces its content; the file is removed at exit.
class ScratchFile {
 public:
  // extension: ".wav", ".csv", ".raw", … Throws std::runtime_error if no folder is writable.
  explicit ScratchFile(const std::string& extension) {
    const char* tmp = std::getenv("TMPDIR");
    const std::string folder = access("/dev/shm", W_OK) == 0 ? "/dev/shm" : (tmp ? tmp : "/tmp");
    path_ = folder + "/pcasweep-fuzz-" + std::to_string(getpid()) + extension;
  }
  ~ScratchFile() { std::remove(path_.c_str()); }
  ScratchFile(const ScratchFile&) = delete;
  ScratchFile& operator=(const ScratchFile&) = delete;

  // Replaces the file's content with `bytes`; returns its path. Aborts if the write fails
  // (a harness that cannot write its input would test nothing).
  const std::string& write(std::string_view bytes) {
    std::FILE* f = std::fopen(path_.c_str(), "wb");
    if (!f || std::fwrite(bytes.data(), 1, bytes.size(), f) != bytes.size() || std::fclose(f) != 0) std::abort();
    return path_;
  }

 private:
  std::string path_;
};

}  // namespace pcasweep::fuzz
