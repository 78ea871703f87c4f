// pcasweep/io/sound_checks.hpp — what a sound file's bytes must hold before libsndfile decodes them.
//
// Contract: libsndfile reads a truncated file short without an error and trusts a header's frame
// count when it sizes things. These checks look at the raw bytes and the declared shape and throw
// Error(data) "PATH: ..." (one line naming the file and the problem) for a file that cannot be
// whole, before any sample buffer is made. They never allocate more than a few bytes.
#pragma once

#include <cstdint>
#include <string>

namespace pcasweep {

// Largest recording accepted by default, in frames (samples per channel): 2^28, about 93 minutes
// at 48 kHz (--max-frames raises it; the total of kMaxSignalSamples in io/signal.hpp still applies).
inline constexpr std::uint64_t kDefaultMaxFrames = std::uint64_t(1) << 28;

// The container around the samples, from the file's bytes:
//   RIFF/WAVE, FORM/AIFF(-C): every chunk up to the sample chunk ('data', 'SSND') holds the bytes
//   its size field declares (Microsoft RIFF; Apple AIFF 1.3);
//   Ogg (RFC 3533): the pages follow one another to the end of the file, each whole, and the last
//   one carries the end-of-stream flag (a file cut at a page boundary lacks it).
// Other containers (FLAC, W64, RF64, CAF, AU, ...) are left to libsndfile and to the frame count
// comparison of the reader. Throws Error(data) naming `path`.
void check_sound_container(const std::string& bytes, const std::string& path);

// The declared shape against the limits, before the samples are allocated: `frames` above
// `max_frames` is refused naming --max-frames; for an uncompressed format (libsndfile
// `sndfile_format`: PCM 8/16/24/32, float, double, µ-law, A-law outside FLAC/Ogg/MPEG)
// frames·channels·bytes per sample must fit in `file_bytes`. Compressed subtypes (FLAC, Vorbis, Opus, ADPCM, ...) are bounded by
// max_frames only. Throws Error(data) naming `path`.
void check_declared_frames(const std::string& path, std::uint64_t frames, std::uint64_t channels, int sndfile_format,
                           std::uint64_t file_bytes, std::uint64_t max_frames);

// Bytes one sample takes in an uncompressed libsndfile format (major|subtype), 0 for a compressed
// one (FLAC, Ogg and MPEG containers whatever their subtype; ADPCM, GSM, ALAC, ... subtypes).
int uncompressed_sample_bytes(int sndfile_format);

}  // namespace pcasweep
