// tests/support/errors.hpp — read the message a library call throws.
#pragma once

#include <functional>
#include <string>

#include "core/error.hpp"

namespace pcasweep::testing {

// Runs `f`; returns the message of the pcasweep::Error it throws, or "" if it throws none.
inline std::string error_message_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const pcasweep::Error& e) {
    return e.what();
  }
  return "";
}

}  // namespace pcasweep::testing
