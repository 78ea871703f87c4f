#include "fuzz/fuzz_support.hpp"

#include <cstring>

#include "codec/container.hpp"

namespace pcasweep::fuzz {

std::string with_crc_trailer(std::string_view bytes) {
  std::string out(bytes);
  if (out.size() < 4) return out;
  const std::uint32_t crc = crc32_of(std::string_view(out).substr(0, out.size() - 4));
  const unsigned char le[4] = {std::uint8_t(crc), std::uint8_t(crc >> 8), std::uint8_t(crc >> 16), std::uint8_t(crc >> 24)};
  std::memcpy(out.data() + out.size() - 4, le, 4);
  return out;
}

}  // namespace pcasweep::fuzz
