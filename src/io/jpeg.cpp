#include "io/jpeg.hpp"

// jpeglib.h needs FILE and size_t declared first.
#include <cstdio>
#include <cstdlib>
#include <csetjmp>
#include <jpeglib.h>

#include <vector>

#include "core/error.hpp"
#include "io/image.hpp"

namespace pcasweep {

namespace {

// libjpeg reports errors through error_exit (by default exit()): ours jumps back
// with the message; warnings (emit_message level −1, e.g. premature end of data)
// count as errors too, so a damaged stream never decodes to invented rows.
struct ErrorManager {
  jpeg_error_mgr base;
  std::jmp_buf jump;
  char message[JMSG_LENGTH_MAX] = {};
};

void on_error(j_common_ptr info) {
  auto* e = reinterpret_cast<ErrorManager*>(info->err);
  (*info->err->format_message)(info, e->message);
  std::longjmp(e->jump, 1);
}

void on_message(j_common_ptr info, int level) {
  if (level < 0) on_error(info);  // a warning: treat as an error
}

ErrorManager* install(jpeg_error_mgr* base) {
  jpeg_std_error(base);
  base->error_exit = on_error;
  base->emit_message = on_message;
  return reinterpret_cast<ErrorManager*>(base);
}

void check_image(const Image& image, int quality) {
  if (!jpeg_supports_channels(image.channels)) {
    throw usage_error("JPEG baseline: images with " + std::to_string(image.channels) +
                      " channels are not supported (gray or RGB only)");
  }
  if (quality < 1 || quality > 100) throw usage_error("JPEG quality must be 1..100");
}

}  // namespace

namespace {
// The libjpeg part of encode_jpeg, with only trivially destructible locals
// between setjmp and any longjmp (so no destructor is skipped). Returns false
// with errors->message set on failure.
bool compress(const Image& image, const JpegOptions& options, JSAMPLE* row, unsigned char** buffer,
              unsigned long* size, ErrorManager* errors) {
  jpeg_compress_struct cinfo{};
  cinfo.err = &errors->base;
  install(&errors->base);
  if (setjmp(errors->jump)) {
    jpeg_destroy_compress(&cinfo);
    return false;
  }
  jpeg_create_compress(&cinfo);
  jpeg_mem_dest(&cinfo, buffer, size);
  cinfo.image_width = JDIMENSION(image.width);
  cinfo.image_height = JDIMENSION(image.height);
  cinfo.input_components = image.channels;
  cinfo.in_color_space = image.channels == 3 ? JCS_RGB : JCS_GRAYSCALE;
  jpeg_set_defaults(&cinfo);
  jpeg_set_quality(&cinfo, options.quality, TRUE);
  cinfo.optimize_coding = options.optimize ? TRUE : FALSE;
  if (image.channels == 3) {
    // Component 0 is Y; sampling factors h×v relative to the chroma components.
    const int f = options.chroma_420 ? 2 : 1;
    cinfo.comp_info[0].h_samp_factor = f;
    cinfo.comp_info[0].v_samp_factor = f;
    cinfo.comp_info[1].h_samp_factor = cinfo.comp_info[1].v_samp_factor = 1;
    cinfo.comp_info[2].h_samp_factor = cinfo.comp_info[2].v_samp_factor = 1;
  }
  jpeg_start_compress(&cinfo, TRUE);
  const std::size_t row_samples = std::size_t(image.width) * image.channels;
  while (cinfo.next_scanline < cinfo.image_height) {
    const std::uint16_t* in = image.samples.data() + std::size_t(cinfo.next_scanline) * row_samples;
    for (std::size_t i = 0; i < row_samples; ++i)
      row[i] = image.bit_depth == 16 ? JSAMPLE((unsigned(in[i]) + 128) / 257) : JSAMPLE(in[i]);
    JSAMPROW rows[1] = {row};
    jpeg_write_scanlines(&cinfo, rows, 1);
  }
  jpeg_finish_compress(&cinfo);
  jpeg_destroy_compress(&cinfo);
  return true;
}
}  // namespace

std::string encode_jpeg(const Image& image, const JpegOptions& options) {
  check_image(image, options.quality);
  std::vector<JSAMPLE> row(std::size_t(image.width) * image.channels);
  ErrorManager errors;
  unsigned char* buffer = nullptr;
  unsigned long size = 0;
  const bool ok = compress(image, options, row.data(), &buffer, &size, &errors);
  std::string out = ok ? std::string(reinterpret_cast<const char*>(buffer), size) : std::string();
  std::free(buffer);
  if (!ok) throw data_error(std::string("JPEG encoding failed in libjpeg: ") + errors.message);
  return out;
}

std::string encode_jpeg(const Image& image, int quality) {
  JpegOptions options;
  options.quality = quality;
  return encode_jpeg(image, options);
}

// Owns libjpeg's decompressor: destroyed here, so a constructor of JpegRowReader that throws
// (a damaged header, a refused size) frees it too, through the unique_ptr member; the
// reader's own destructor does not run in that case.
struct JpegRowReader::State {
  jpeg_decompress_struct cinfo{};
  ErrorManager errors;
  std::string name;
  std::vector<JSAMPLE> row;
  bool created = false;
  State() = default;
  State(const State&) = delete;
  State& operator=(const State&) = delete;
  ~State() {
    if (created) jpeg_destroy_decompress(&cinfo);
  }
};

namespace {
// libjpeg calls of the reader, each with only trivial locals around setjmp.
bool read_header(jpeg_decompress_struct* cinfo, ErrorManager* errors, const unsigned char* data, unsigned long size,
                 bool* created) {
  cinfo->err = &errors->base;
  install(&errors->base);
  if (setjmp(errors->jump)) return false;
  jpeg_create_decompress(cinfo);
  *created = true;
  jpeg_mem_src(cinfo, data, size);
  jpeg_read_header(cinfo, TRUE);
  return true;
}

bool start(jpeg_decompress_struct* cinfo, ErrorManager* errors) {
  if (setjmp(errors->jump)) return false;
  cinfo->out_color_space = cinfo->num_components == 1 ? JCS_GRAYSCALE : JCS_RGB;
  jpeg_start_decompress(cinfo);
  return true;
}

JpegHeader header_of(const jpeg_decompress_struct& cinfo) {
  JpegHeader h;
  h.width = int(cinfo.image_width);
  h.height = int(cinfo.image_height);
  h.components = cinfo.num_components;
  h.arithmetic = cinfo.arith_code != 0;
  h.progressive = cinfo.progressive_mode != 0;
  return h;
}

// Reads one row into `row`; after the last row, checks the end of the stream.
bool read_one(jpeg_decompress_struct* cinfo, ErrorManager* errors, JSAMPLE* row) {
  if (setjmp(errors->jump)) return false;
  JSAMPROW rows[1] = {row};
  jpeg_read_scanlines(cinfo, rows, 1);
  if (cinfo->output_scanline == cinfo->output_height) jpeg_finish_decompress(cinfo);
  return true;
}
}  // namespace

JpegRowReader::JpegRowReader(std::string_view bytes, const std::string& name, const JpegHeaderCheck& check)
    : state_(std::make_unique<State>()) {
  State& s = *state_;
  s.name = name;
  if (!read_header(&s.cinfo, &s.errors, reinterpret_cast<const unsigned char*>(bytes.data()),
                   static_cast<unsigned long>(bytes.size()), &s.created)) {
    throw data_error(name + ": corrupt or truncated JPEG (" + s.errors.message + ")");
  }
  if (s.cinfo.num_components != 1 && s.cinfo.num_components != 3) {
    throw data_error(name + ": not a readable JPEG (" + std::to_string(s.cinfo.num_components) +
                     " colour components: only gray and YCbCr/RGB JPEG are read)");
  }
  if (check) check(header_of(s.cinfo));
  if (!start(&s.cinfo, &s.errors)) throw data_error(name + ": corrupt or truncated JPEG (" + s.errors.message + ")");
  s.row.resize(std::size_t(s.cinfo.output_width) * s.cinfo.output_components);
}

JpegRowReader::~JpegRowReader() = default;  // State frees libjpeg's decompressor

int JpegRowReader::width() const { return int(state_->cinfo.output_width); }
int JpegRowReader::height() const { return int(state_->cinfo.output_height); }
int JpegRowReader::channels() const { return state_->cinfo.output_components; }

int JpegRowReader::read_rows(std::uint16_t* out, int rows) {
  State& s = *state_;
  int done = 0;
  const std::size_t n = s.row.size();
  while (done < rows && s.cinfo.output_scanline < s.cinfo.output_height) {
    if (!read_one(&s.cinfo, &s.errors, s.row.data()))
      throw data_error(s.name + ": corrupt or truncated JPEG (" + s.errors.message + ")");
    for (std::size_t i = 0; i < n; ++i) out[std::size_t(done) * n + i] = s.row[i];
    ++done;
  }
  return done;
}

Image decode_jpeg(const std::string& bytes, const std::string& name, const ImageReadOptions& options) {
  auto guard = [&](const JpegHeader& h) {
    // Huffman-coded JPEG (ITU-T T.81): the component with the largest sampling factors has
    // ceil(w/8)·ceil(h/8) blocks, and each block's DC difference takes a Huffman code of at least
    // one bit, in the sequential scan or in the first DC scan of a progressive file (T.81
    // G.1.1.1.1); AC data may cost next to nothing (end-of-band runs). So at least 1 bit per 8×8
    // block, generous. Arithmetic coding (T.81 Annex D) adapts its probabilities and can code a
    // block in far less than a bit: only --max-pixels bounds it.
    const double blocks = double((std::uint64_t(h.width) + 7) / 8) * double((std::uint64_t(h.height) + 7) / 8);
    const double least = h.arithmetic ? 0.0 : blocks / 8.0;
    guard_declared_size(name, std::uint64_t(h.width), std::uint64_t(h.height), options.max_pixels, least,
                        bytes.size(), "one bit per 8x8 block (Huffman-coded JPEG, ITU-T T.81)");
    if (std::uint64_t(h.width) * std::uint64_t(h.height) * std::uint64_t(h.components) > kMaxImageSamples)
      throw data_error(name + ": image too large (" + std::to_string(h.width) + "x" + std::to_string(h.height) + ")");
  };
  JpegRowReader reader(bytes, name, guard);
  Image image = make_image(reader.width(), reader.height(), reader.channels(), 8);
  const int rows = reader.read_rows(image.samples.data(), image.height);
  if (rows != image.height)
    throw data_error(name + ": corrupt or truncated JPEG: " + std::to_string(rows) + " of " +
                     std::to_string(image.height) + " rows decoded");
  return image;
}

}  // namespace pcasweep
