#include "io/sound_checks.hpp"

#include <sndfile.h>

#include <algorithm>
#include <string_view>

#include "core/error.hpp"

namespace pcasweep {

namespace {

std::uint32_t read_u32(const std::string& b, std::size_t at, bool big_endian) {
  std::uint32_t v = 0;
  for (int i = 0; i < 4; ++i) {
    const std::uint32_t byte = static_cast<unsigned char>(b[at + std::size_t(i)]);
    v |= big_endian ? byte << (8 * (3 - i)) : byte << (8 * i);
  }
  return v;
}

// Walks the chunks of a RIFF/WAVE or FORM/AIFF file and refuses one whose
// sample chunk claims more bytes than follow it (a truncated file or a lying
// header). libsndfile would quietly shorten such a file; we say so instead.
void check_chunks(const std::string& bytes, const std::string& path, bool big_endian, const char* sample_chunk) {
  std::size_t at = 12;
  while (at + 8 <= bytes.size()) {
    const std::string id = bytes.substr(at, 4);
    const std::uint64_t size = read_u32(bytes, at + 4, big_endian);
    const std::uint64_t available = bytes.size() - (at + 8);
    if (id == sample_chunk) {
      if (size > available) {
        throw data_error(path + ": header declares " + std::to_string(size) + " bytes of samples but only " +
                         std::to_string(available) + " follow (truncated file or lying header)");
      }
      return;
    }
    if (size > available) {
      throw data_error(path + ": chunk '" + id + "' declares " + std::to_string(size) + " bytes but only " +
                       std::to_string(available) + " follow (truncated file or lying header)");
    }
    at += 8 + std::size_t(size) + (size & 1);  // chunks are padded to even length
  }
  throw data_error(path + ": no '" + std::string(sample_chunk) + "' chunk: the file holds no samples");
}

// Ogg pages (RFC 3533 section 6): "OggS", version, header type (bit 2: end of stream), granule
// position (8), serial (4), sequence (4), CRC (4), segment count n at byte 26, n lacing values,
// then the sum of the lacing values in bytes of data. The walk only reads page headers.
void check_ogg_pages(const std::string& bytes, const std::string& path) {
  std::size_t at = 0;
  std::uint64_t pages = 0;
  bool last_ends_stream = false;
  while (at < bytes.size()) {
    const std::string where = path + ": truncated Ogg: page " + std::to_string(pages + 1) + " at byte " +
                              std::to_string(at);
    const std::size_t left = bytes.size() - at, prefix = std::min<std::size_t>(4, left);
    if (std::string_view(bytes).substr(at, prefix) != std::string_view("OggS").substr(0, prefix))
      throw data_error(path + ": damaged Ogg: no page starts at byte " + std::to_string(at) + ", where page " +
                       std::to_string(pages) + " ends");
    if (left < 27) throw data_error(where + " ends inside its header");
    const std::size_t segments = static_cast<unsigned char>(bytes[at + 26]);
    if (bytes.size() - at < 27 + segments) throw data_error(where + " ends inside its header");
    std::uint64_t body = 0;
    for (std::size_t i = 0; i < segments; ++i) body += static_cast<unsigned char>(bytes[at + 27 + i]);
    const std::uint64_t end = std::uint64_t(at) + 27 + segments + body;
    if (end > bytes.size())
      throw data_error(where + " declares " + std::to_string(body) + " bytes of data, " +
                       std::to_string(bytes.size() - (at + 27 + segments)) + " follow");
    last_ends_stream = (static_cast<unsigned char>(bytes[at + 5]) & 0x04) != 0;
    at = std::size_t(end);
    ++pages;
  }
  if (!last_ends_stream)
    throw data_error(path + ": truncated Ogg: the last of its " + std::to_string(pages) +
                     " pages does not end the stream (no end-of-stream flag)");
}

}  // namespace

void check_sound_container(const std::string& bytes, const std::string& path) {
  if (bytes.size() >= 4 && bytes.compare(0, 4, "OggS") == 0) return check_ogg_pages(bytes, path);
  if (bytes.size() < 12) return;  // too short for a container: libsndfile reports it
  const std::string magic = bytes.substr(0, 4), kind = bytes.substr(8, 4);
  if (magic == "RIFF" && kind == "WAVE") return check_chunks(bytes, path, false, "data");
  if (magic == "FORM" && (kind == "AIFF" || kind == "AIFC")) return check_chunks(bytes, path, true, "SSND");
  // RF64, W64, FLAC, CAF, AU, ...: libsndfile's own checks and the frame count comparison apply.
}

int uncompressed_sample_bytes(int sndfile_format) {
  // FLAC and Ogg name a PCM subtype for the depth they decode to, but their data is compressed.
  const int major = sndfile_format & SF_FORMAT_TYPEMASK;
  if (major == SF_FORMAT_FLAC || major == SF_FORMAT_OGG) return 0;
#ifdef SF_FORMAT_MPEG
  if (major == SF_FORMAT_MPEG) return 0;
#endif
  switch (sndfile_format & SF_FORMAT_SUBMASK) {
    case SF_FORMAT_PCM_S8:
    case SF_FORMAT_PCM_U8:
    case SF_FORMAT_ULAW:
    case SF_FORMAT_ALAW: return 1;
    case SF_FORMAT_PCM_16: return 2;
    case SF_FORMAT_PCM_24: return 3;
    case SF_FORMAT_PCM_32:
    case SF_FORMAT_FLOAT: return 4;
    case SF_FORMAT_DOUBLE: return 8;
    default: return 0;
  }
}

void check_declared_frames(const std::string& path, std::uint64_t frames, std::uint64_t channels, int sndfile_format,
                           std::uint64_t file_bytes, std::uint64_t max_frames) {
  if (frames > max_frames) {
    throw data_error(path + ": declares " + std::to_string(frames) + " frames, above --max-frames (" +
                     std::to_string(max_frames) + "); raise --max-frames to read it");
  }
  const int sample_bytes = uncompressed_sample_bytes(sndfile_format);
  const double needed = double(frames) * double(channels) * double(sample_bytes);
  if (sample_bytes > 0 && needed > double(file_bytes)) {
    throw data_error(path + ": declares " + std::to_string(frames) + " frames of " + std::to_string(channels) +
                     " uncompressed channel(s), which needs " + std::to_string(std::uint64_t(needed)) +
                     " bytes, but the file holds " + std::to_string(file_bytes) +
                     ": it is truncated or its header is corrupt");
  }
}

}  // namespace pcasweep
