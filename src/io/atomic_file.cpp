#include "io/atomic_file.hpp"

#include <atomic>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <fcntl.h>
#include <filesystem>
#include <fstream>
#include <memory>
#include <sstream>
#include <sys/stat.h>
#include <unistd.h>

#include "core/error.hpp"
#include "core/interrupt.hpp"

namespace pcasweep {
namespace {

constexpr std::size_t kBufferBytes = std::size_t(1) << 16;

std::string temporary_name(const std::string& path) {
  static std::atomic<unsigned> counter{0};
  return path + ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(counter++);
}

// Writes all n bytes to fd; returns 0 or the errno of the failure.
int write_all(int fd, const char* p, std::size_t n) {
  while (n > 0) {
    const ssize_t wrote = ::write(fd, p, n);
    if (wrote < 0 && errno == EINTR) continue;
    if (wrote <= 0) return wrote < 0 ? errno : EIO;
    p += wrote;
    n -= std::size_t(wrote);
  }
  return 0;
}

}  // namespace

AtomicFile::AtomicFile(std::string path) : path_(std::move(path)) {
  struct stat st {};
  if (::stat(path_.c_str(), &st) == 0 && !S_ISREG(st.st_mode) && !S_ISDIR(st.st_mode)) {
    // A device or a pipe (/dev/null, /dev/full, a FIFO): written in place; renaming a
    // temporary onto it would replace the device node with a regular file.
    fd_ = ::open(path_.c_str(), O_WRONLY | O_CLOEXEC);
    if (fd_ < 0) throw data_error(path_ + ": cannot write: " + std::strerror(errno));
    buffer_.reserve(kBufferBytes);
    return;
  }
  temporary_ = temporary_name(path_);
  fd_ = create_registered_temporary(temporary_, &slot_);
  if (fd_ < 0) {
    const int err = errno;
    temporary_.clear();
    throw data_error(path_ + ": cannot create a temporary file beside it: " + std::strerror(err));
  }
  buffer_.reserve(kBufferBytes);
}

AtomicFile::~AtomicFile() {
  if (fd_ >= 0) ::close(fd_);
  if (!committed_ && !temporary_.empty()) {
    ::unlink(temporary_.c_str());
    forget_temporary(slot_);
  }
}

void AtomicFile::fail(int err) {
  throw data_error(path_ + ": cannot write: " + std::strerror(err ? err : EIO));
}

void AtomicFile::write(const void* data, std::size_t n) {
  if (fd_ < 0) fail(EBADF);
  const char* p = static_cast<const char*>(data);
  if (buffer_.size() + n > kBufferBytes) flush();
  if (n >= kBufferBytes) {
    if (const int err = write_all(fd_, p, n)) fail(err);
    return;
  }
  buffer_.insert(buffer_.end(), p, p + n);
}

void AtomicFile::flush() {
  if (buffer_.empty()) return;
  const int err = write_all(fd_, buffer_.data(), buffer_.size());
  buffer_.clear();
  if (err) fail(err);
}

void AtomicFile::commit() {
  if (committed_ || fd_ < 0) fail(EBADF);
  flush();
  const int fd = fd_;
  fd_ = -1;
  if (::close(fd) != 0) fail(errno);
  if (temporary_.empty()) {  // written in place
    committed_ = true;
    return;
  }
  if (::rename(temporary_.c_str(), path_.c_str()) != 0) fail(errno);
  committed_ = true;
  forget_temporary(slot_);
}

void write_file_atomic(const std::string& path, std::string_view bytes) {
  AtomicFile file(path);
  file.write(bytes);
  file.commit();
}

void copy_file_atomic(const std::string& from, const std::string& to) {
  std::unique_ptr<std::FILE, int (*)(std::FILE*)> in(std::fopen(from.c_str(), "rb"), std::fclose);
  if (!in) throw data_error(from + ": cannot read: " + std::strerror(errno));
  AtomicFile out(to);
  std::vector<char> chunk(kBufferBytes);
  for (;;) {
    const std::size_t got = std::fread(chunk.data(), 1, chunk.size(), in.get());
    if (got > 0) out.write(chunk.data(), got);
    if (got < chunk.size()) break;
  }
  if (std::ferror(in.get())) throw data_error(from + ": cannot read: " + std::strerror(errno ? errno : EIO));
  out.commit();
}

std::string read_file(const std::string& path) {
  std::error_code ec;
  if (!std::filesystem::exists(path, ec)) throw data_error(path + ": no such file");
  if (std::filesystem::is_directory(path, ec)) throw data_error(path + ": is a folder, not a file");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw data_error(path + ": cannot read: " + std::strerror(errno));
  std::ostringstream buffer;
  buffer << in.rdbuf();
  if (in.bad()) throw data_error(path + ": cannot read");
  return buffer.str();
}

}  // namespace pcasweep
