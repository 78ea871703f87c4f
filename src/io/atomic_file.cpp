#include "io/atomic_file.hpp"

#include <atomic>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <unistd.h>

#include "core/error.hpp"

namespace pcasweep {
namespace {

std::string temporary_name(const std::string& path) {
  static std::atomic<unsigned> counter{0};
  return path + ".tmp-" + std::to_string(::getpid()) + "-" + std::to_string(counter++);
}

}  // namespace

void write_via_temporary(const std::string& path,
                         const std::function<bool(const std::string&)>& produce) {
  const std::string tmp = temporary_name(path);
  bool ok = false;
  try {
    ok = produce(tmp);
  } catch (...) {
    std::remove(tmp.c_str());
    throw;
  }
  if (!ok) {
    std::remove(tmp.c_str());
    throw data_error(path + ": cannot write");
  }
  std::error_code ec;
  std::filesystem::rename(tmp, path, ec);
  if (ec) {
    std::remove(tmp.c_str());
    throw data_error(path + ": cannot write: " + ec.message());
  }
}

void write_file_atomic(const std::string& path, std::string_view bytes) {
  write_via_temporary(path, [&](const std::string& tmp) {
    std::FILE* f = std::fopen(tmp.c_str(), "wb");
    if (!f) throw data_error(path + ": cannot write: " + std::strerror(errno));
    const bool wrote = std::fwrite(bytes.data(), 1, bytes.size(), f) == bytes.size();
    const bool flushed = std::fflush(f) == 0;
    const bool closed = std::fclose(f) == 0;
    return wrote && flushed && closed;
  });
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
