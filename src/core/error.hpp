// pcasweep/core/error.hpp — the one error type every stage throws.
//
// Contract: a stage that cannot do its job throws pcasweep::Error with a
// one-line message that already names the file (when there is one) and the
// problem. The CLI prints "pcasweep: <message>" and exits with exit_code():
// 2 for a usage error (bad option, k out of range), 1 for bad data or I/O.
#pragma once

#include <stdexcept>
#include <string>

namespace pcasweep {

enum class ErrorKind { usage = 2, data = 1 };

class Error : public std::runtime_error {
 public:
  Error(ErrorKind kind, const std::string& message) : std::runtime_error(message), kind_(kind) {}
  ErrorKind kind() const { return kind_; }
  int exit_code() const { return static_cast<int>(kind_); }

 private:
  ErrorKind kind_;
};

// Shorthands: usage_error("--stride must be at least 1"),
// data_error(path + ": not a PNG, JPEG, BMP, TGA or PNM image").
inline Error usage_error(const std::string& message) { return Error(ErrorKind::usage, message); }
inline Error data_error(const std::string& message) { return Error(ErrorKind::data, message); }

}  // namespace pcasweep
