// Harness: a basis file (.pcsb) parsed by read_basis_file (exact length from
// d and r, caps, CRC-32), as given and with its CRC trailer repaired.
#include "codec/basis_file.hpp"
#include "fuzz/fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string given(reinterpret_cast<const char*>(data), size);
  for (const std::string& bytes : {given, pcasweep::fuzz::with_crc_trailer(given)}) {
    pcasweep::fuzz::refused_or_read([&] {
      const pcasweep::SavedBasis saved = pcasweep::read_basis_file(bytes, "fuzz.pcsb");
      const pcasweep::Basis& b = saved.basis;
      // basis.hpp's shapes: mean d, components d×r, eigenvalues r.
      if (b.components.rows() != b.mean.size() || b.components.cols() != b.eigenvalues.size()) std::abort();
    });
  }
  return 0;
}
