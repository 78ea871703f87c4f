// pcasweep decode FILE [--basis BASIS] -o IMAGE
#include <iostream>
#include <memory>
#include <optional>

#include "cli/command.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "io/png.hpp"
#include "pipeline/codec_study.hpp"

namespace pcasweep::cli {

namespace {
struct DecodeArgs {
  std::string input;
  std::string out;
  std::string basis;
  bool quiet = false;
};
}  // namespace

Action setup_decode(CLI::App& sub) {
  auto args = std::make_shared<DecodeArgs>();
  sub.add_option("FILE", args->input, "Coded image written by `pcasweep encode` or `pcasweep sweep`")->required();
  sub.add_option("--out,-o", args->out, "PNG to write (8- or 16-bit as coded)")->required();
  sub.add_option("--basis", args->basis, "The basis file the image was coded with, when it names one");
  sub.add_flag("--quiet,-q", args->quiet, "Print nothing on success");
  return [args]() {
    const std::string bytes = read_file(args->input);
    std::optional<LoadedBasis> loaded;
    if (!args->basis.empty()) loaded = load_basis_file(args->basis);
    // Band by band from the coded bytes to PNG rows: the decoded image is never held whole.
    PatchDecoder decoder(bytes, args->input, loaded ? &loaded->saved : nullptr, loaded ? &loaded->sha256 : nullptr);
    const CodedImage& h = decoder.header();
    PngRowWriter png(args->out, int(h.width), int(h.height), h.channels, h.bit_depth, PngWriteOptions{});
    std::vector<std::uint16_t> rows;
    while (decoder.next_rows(rows) > 0) png.write_rows(rows.data(), int(rows.size() / (std::size_t(h.width) * h.channels)));
    png.finish();
    if (!args->quiet) {
      std::cout << "wrote " << args->out << ": " << h.width << "x" << h.height << ", " << int(h.channels)
                << " channel(s), " << int(h.bit_depth) << "-bit\n";
    }
    return 0;
  };
}

}  // namespace pcasweep::cli
