#include "io/signal.hpp"

#include <sndfile.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <limits>
#include <set>

#include "core/error.hpp"
#include "io/atomic_file.hpp"

namespace pcasweep {

namespace {

std::string lower_extension(const std::string& path) {
  std::string ext = std::filesystem::path(path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char ch) { return std::tolower(ch); });
  return ext;
}

bool is_csv_extension(const std::string& ext) { return ext == ".csv" || ext == ".tsv" || ext == ".txt"; }
bool is_raw_extension(const std::string& ext) { return ext == ".raw" || ext == ".pcm"; }

std::string count_text(std::size_t n) { return std::to_string(n); }

// ---------------------------------------------------------------- sndfile

// libsndfile reading from bytes already in memory (so the header check and
// the decode see the same bytes, and a file cannot change between them).
struct MemoryFile {
  const std::string* bytes;
  sf_count_t position = 0;
};

sf_count_t mem_length(void* user) { return sf_count_t(static_cast<MemoryFile*>(user)->bytes->size()); }
sf_count_t mem_seek(sf_count_t offset, int whence, void* user) {
  auto* m = static_cast<MemoryFile*>(user);
  const sf_count_t size = sf_count_t(m->bytes->size());
  sf_count_t target = offset;
  if (whence == SEEK_CUR) target = m->position + offset;
  else if (whence == SEEK_END) target = size + offset;
  if (target < 0) return -1;
  m->position = std::min(target, size);
  return m->position;
}
sf_count_t mem_read(void* ptr, sf_count_t count, void* user) {
  auto* m = static_cast<MemoryFile*>(user);
  const sf_count_t size = sf_count_t(m->bytes->size());
  const sf_count_t n = std::max<sf_count_t>(0, std::min(count, size - m->position));
  if (n > 0) std::memcpy(ptr, m->bytes->data() + m->position, std::size_t(n));
  m->position += n;
  return n;
}
sf_count_t mem_write(const void*, sf_count_t, void*) { return 0; }
sf_count_t mem_tell(void* user) { return static_cast<MemoryFile*>(user)->position; }

struct SubtypeInfo {
  SampleType type;
  int shift;  // sf_read_int returns samples left-aligned in 32 bits: shift right by this
};

SubtypeInfo subtype_info(int format) {
  switch (format & SF_FORMAT_SUBMASK) {
    case SF_FORMAT_PCM_S8:
    case SF_FORMAT_PCM_U8: return {SampleType::pcm8, 24};
    case SF_FORMAT_PCM_16: return {SampleType::pcm16, 16};
    case SF_FORMAT_PCM_24: return {SampleType::pcm24, 8};
    case SF_FORMAT_PCM_32: return {SampleType::pcm32, 0};
    case SF_FORMAT_FLOAT: return {SampleType::float32, 0};
    case SF_FORMAT_DOUBLE: return {SampleType::float64, 0};
    default: return {SampleType::lossy, 0};
  }
}

void check_finite(const Signal& s, const std::string& path) {
  for (Eigen::Index c = 0; c < s.samples.cols(); ++c)
    for (Eigen::Index f = 0; f < s.samples.rows(); ++f)
      if (!std::isfinite(s.samples(f, c))) {
        throw data_error(path + ": sample at frame " + std::to_string(f + 1) + ", channel " + std::to_string(c + 1) +
                         " is not a finite number");
      }
}

void check_size(std::size_t frames, std::size_t channels, const std::string& path, std::uint64_t max_frames) {
  if (frames == 0) throw data_error(path + ": the recording holds no samples");
  if (channels == 0) throw data_error(path + ": the recording has no channels");
  if (frames > max_frames) {
    throw data_error(path + ": " + std::to_string(frames) + " frames, above --max-frames (" +
                     std::to_string(max_frames) + "); raise --max-frames to read it");
  }
  if (frames > kMaxSignalSamples / channels) {
    throw data_error(path + ": recording too large (" + std::to_string(frames) + " frames x " +
                     std::to_string(channels) + " channels; at most " + std::to_string(kMaxSignalSamples) +
                     " samples)");
  }
}

// Channel names travel in the file's comment string as
// "pcasweep channels: axial, radial, tacho" (our own convention; other
// comments are ignored). Returns the names, or nothing if absent or the
// count differs from `channels`.
constexpr const char* kChannelComment = "pcasweep channels: ";

std::vector<std::string> parse_channel_names_comment(const std::string& comment, int channels) {
  if (comment.rfind(kChannelComment, 0) != 0) return {};
  std::vector<std::string> names;
  std::size_t start = std::strlen(kChannelComment);
  while (start <= comment.size()) {
    std::size_t comma = comment.find(',', start);
    if (comma == std::string::npos) comma = comment.size();
    std::string name = comment.substr(start, comma - start);
    while (!name.empty() && name.front() == ' ') name.erase(name.begin());
    while (!name.empty() && name.back() == ' ') name.pop_back();
    if (name.empty()) return {};
    names.push_back(name);
    start = comma + 1;
  }
  return int(names.size()) == channels ? names : std::vector<std::string>{};
}

Signal read_sndfile(const std::string& bytes, const std::string& path, std::uint64_t max_frames) {
  check_sound_container(bytes, path);
  MemoryFile memory{&bytes};
  SF_VIRTUAL_IO io{mem_length, mem_seek, mem_read, mem_write, mem_tell};
  SF_INFO info{};
  SNDFILE* file = sf_open_virtual(&io, SFM_READ, &info, &memory);
  if (!file) {
    throw data_error(path + ": not a recording libsndfile can read (" + std::string(sf_strerror(nullptr)) + ")");
  }
  struct Closer {
    SNDFILE* f;
    ~Closer() { sf_close(f); }
  } closer{file};
  if (info.channels <= 0 || info.frames < 0) throw data_error(path + ": header declares an impossible shape");
  check_declared_frames(path, std::uint64_t(info.frames), std::uint64_t(info.channels), info.format, bytes.size(),
                        max_frames);
  check_size(std::size_t(info.frames), std::size_t(info.channels), path, max_frames);
  if (info.samplerate <= 0) throw data_error(path + ": header declares a sample rate of " +
                                             std::to_string(info.samplerate) + " Hz");
  Signal s;
  s.format = SignalFormat::sndfile;
  s.sndfile_format = info.format;
  const SubtypeInfo sub = subtype_info(info.format);
  s.sample_type = sub.type;
  s.sample_rate = info.samplerate;
  s.channel_names = default_signal_channel_names(info.channels);
  if (const char* comment = sf_get_string(file, SF_STR_COMMENT)) {
    auto names = parse_channel_names_comment(comment, info.channels);
    if (!names.empty()) s.channel_names = std::move(names);
  }
  const Eigen::Index frames = info.frames, channels = info.channels;
  // Uncompressed samples were checked against the file's size: all are allocated at once. A
  // compressed file's frame count is only its header's word, so its matrix grows (doubling) as
  // frames actually arrive.
  const bool compressed = uncompressed_sample_bytes(info.format) == 0;
  s.samples.resize(compressed ? std::min<Eigen::Index>(frames, Eigen::Index(1) << 16) : frames, channels);
  // Read in blocks of frames; the interleaved block is scattered into columns.
  constexpr sf_count_t kBlock = 8192;
  std::vector<int> ints;
  std::vector<double> reals;
  const bool integer = sub.type == SampleType::pcm8 || sub.type == SampleType::pcm16 ||
                       sub.type == SampleType::pcm24 || sub.type == SampleType::pcm32;
  if (integer) ints.resize(std::size_t(kBlock * channels));
  else reals.resize(std::size_t(kBlock * channels));
  // Float and double files are read as stored, not rescaled; lossy codecs
  // decode to libsndfile's normalised ±1 scale.
  if (sub.type == SampleType::float32 || sub.type == SampleType::float64) {
    sf_command(file, SFC_SET_NORM_DOUBLE, nullptr, SF_FALSE);
  }
  sf_count_t done = 0;
  while (done < frames) {
    const sf_count_t want = std::min<sf_count_t>(kBlock, frames - done);
    if (done + want > s.samples.rows())
      s.samples.conservativeResize(std::min<Eigen::Index>(frames, 2 * s.samples.rows()), channels);
    const sf_count_t got =
        integer ? sf_readf_int(file, ints.data(), want) : sf_readf_double(file, reals.data(), want);
    if (got <= 0) break;
    for (sf_count_t f = 0; f < got; ++f)
      for (Eigen::Index c = 0; c < channels; ++c) {
        const std::size_t i = std::size_t(f * channels + c);
        s.samples(done + f, c) = integer ? double(ints[i] >> sub.shift) : reals[i];
      }
    done += got;
  }
  if (done < frames) {
    throw data_error(path + ": header declares " + std::to_string(frames) + " frames but only " +
                     std::to_string(done) + " could be read (truncated file or lying header)");
  }
  check_finite(s, path);
  return s;
}

// ---------------------------------------------------------------- CSV

std::string_view trim(std::string_view s) {
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.remove_prefix(1);
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.remove_suffix(1);
  if (s.size() >= 2 && s.front() == '"' && s.back() == '"') s = s.substr(1, s.size() - 2);
  return s;
}

std::vector<std::string_view> split(std::string_view line, char delimiter) {
  std::vector<std::string_view> cells;
  std::size_t start = 0;
  while (true) {
    const std::size_t at = line.find(delimiter, start);
    cells.push_back(trim(line.substr(start, at == std::string_view::npos ? std::string_view::npos : at - start)));
    if (at == std::string_view::npos) break;
    start = at + 1;
  }
  return cells;
}

// Parses a whole cell as a finite double. `integer` tells whether it was written as a whole number.
bool parse_number(std::string_view cell, double& value, bool& integer) {
  if (cell.empty()) return false;
  std::string_view body = cell;
  if (body.front() == '+') body.remove_prefix(1);
  const char* end = body.data() + body.size();
  auto [ptr, ec] = std::from_chars(body.data(), end, value);
  if (ec != std::errc() || ptr != end || !std::isfinite(value)) return false;
  integer = std::all_of(body.begin(), body.end(),
                        [](char ch) { return std::isdigit(static_cast<unsigned char>(ch)) || ch == '-'; });
  return true;
}

using NumberedLines = std::vector<std::pair<std::size_t, std::string_view>>;

// The file's lines with their 1-based numbers ("\r\n" and "\n" both end a
// line), trailing blank lines dropped.
NumberedLines numbered_lines(std::string_view all) {
  NumberedLines lines;
  std::size_t start = 0, number = 0;
  while (start < all.size()) {
    std::size_t end = all.find('\n', start);
    if (end == std::string_view::npos) end = all.size();
    std::string_view line = all.substr(start, end - start);
    if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
    lines.push_back({++number, line});
    start = end + 1;
  }
  while (!lines.empty() && trim(lines.back().second).empty()) lines.pop_back();
  return lines;
}

// The first of ',', tab and ';' that the first line holds (',' when none).
char detect_delimiter(std::string_view first) {
  return first.find(',') != std::string_view::npos    ? ','
         : first.find('\t') != std::string_view::npos ? '\t'
         : first.find(';') != std::string_view::npos  ? ';'
                                                      : ',';
}

// The indices of the columns --columns asks for (names or 1-based indices),
// all columns when it is empty. Throws Error(usage) naming the file's columns.
std::vector<std::size_t> columns_to_keep(const std::vector<std::string>& names, const SignalReadOptions& options,
                                         const std::string& path) {
  const std::size_t width = names.size();
  std::vector<std::size_t> keep;
  if (options.columns.empty()) {
    for (std::size_t j = 0; j < width; ++j) keep.push_back(j);
    return keep;
  }
  std::set<std::size_t> seen;
  for (const auto& wanted : options.columns) {
    std::size_t index = width;
    const auto by_name = std::find(names.begin(), names.end(), wanted);
    if (by_name != names.end()) {
      index = std::size_t(by_name - names.begin());
    } else {
      std::size_t v = 0;
      auto [ptr, ec] = std::from_chars(wanted.data(), wanted.data() + wanted.size(), v);
      if (ec == std::errc() && ptr == wanted.data() + wanted.size() && v >= 1 && v <= width) index = v - 1;
    }
    if (index >= width) {
      std::string list;
      for (const auto& n : names) list += (list.empty() ? "" : ", ") + n;
      throw usage_error(path + ": --columns: no column '" + wanted + "' (the file has " + std::to_string(width) +
                        " column(s): " + list + "; give names or 1-based indices)");
    }
    if (!seen.insert(index).second) throw usage_error(path + ": --columns names column '" + names[index] + "' twice");
    keep.push_back(index);
  }
  return keep;
}

Signal read_csv(const std::string& bytes, const std::string& path, const SignalReadOptions& options) {
  const NumberedLines lines = numbered_lines(bytes);
  if (lines.empty()) throw data_error(path + ": no rows (the file is blank)");
  const std::string_view first = lines.front().second;
  const char delimiter = detect_delimiter(first);
  const auto head = split(first, delimiter);
  const std::size_t width = head.size();
  // The first row is a header when any of its cells is not a number.
  bool header = false;
  for (auto cell : head) {
    double v;
    bool integer;
    if (!parse_number(cell, v, integer)) header = true;
  }
  std::vector<std::string> names;
  for (std::size_t j = 0; j < width; ++j) {
    std::string name = header ? std::string(head[j]) : std::string();
    names.push_back(name.empty() ? "col" + std::to_string(j + 1) : name);
  }
  const std::vector<std::size_t> keep = columns_to_keep(names, options, path);
  const std::size_t first_data = header ? 1 : 0;
  const std::size_t frames = lines.size() - first_data;
  if (frames == 0) throw data_error(path + ": a header row but no data rows");
  check_size(frames, keep.size(), path, options.max_frames);
  Signal s;
  s.format = SignalFormat::csv;
  s.csv_header = header;
  s.csv_delimiter = delimiter;
  s.samples.resize(Eigen::Index(frames), Eigen::Index(keep.size()));
  bool all_integer = true;
  for (std::size_t r = 0; r < frames; ++r) {
    const auto& [number, line] = lines[first_data + r];
    const auto cells = split(line, delimiter);
    const std::string where = path + ": line " + std::to_string(number);
    if (cells.size() > width) {
      throw data_error(where + " has " + count_text(cells.size()) + " cells but the first row has " +
                       count_text(width));
    }
    for (std::size_t c = 0; c < keep.size(); ++c) {
      const std::size_t j = keep[c];
      const std::string column = "column " + std::to_string(j + 1) + " (" + names[j] + ")";
      if (j >= cells.size() || cells[j].empty()) throw data_error(where + ", " + column + ": missing value");
      double v;
      bool integer;
      if (!parse_number(cells[j], v, integer)) {
        throw data_error(where + ", " + column + ": '" + std::string(cells[j]) + "' is not a number");
      }
      all_integer = all_integer && integer;
      s.samples(Eigen::Index(r), Eigen::Index(c)) = v;
    }
  }
  s.sample_type = all_integer ? SampleType::integer_text : SampleType::real_text;
  for (std::size_t j : keep) s.channel_names.push_back(names[j]);
  return s;
}

// ---------------------------------------------------------------- raw

Signal read_raw(const std::string& bytes, const std::string& path, const SignalReadOptions& options) {
  if (options.raw_type != "int16" && options.raw_type != "float32") {
    throw usage_error(path + ": raw samples need --raw int16 or --raw float32" +
                      (options.raw_type.empty() ? std::string() : ", not '" + options.raw_type + "'"));
  }
  if (options.raw_channels < 1) throw usage_error("--raw-channels must be at least 1");
  const std::size_t width = options.raw_type == "int16" ? 2 : 4;
  const std::size_t frame_bytes = width * std::size_t(options.raw_channels);
  if (bytes.size() % frame_bytes != 0) {
    throw data_error(path + ": " + std::to_string(bytes.size()) + " bytes is not a whole number of frames of " +
                     std::to_string(options.raw_channels) + " " + options.raw_type + " sample(s) (" +
                     std::to_string(frame_bytes) + " bytes each)");
  }
  const std::size_t frames = bytes.size() / frame_bytes;
  check_size(frames, std::size_t(options.raw_channels), path, options.max_frames);
  Signal s;
  s.format = SignalFormat::raw;
  s.sample_type = width == 2 ? SampleType::pcm16 : SampleType::float32;
  s.samples.resize(Eigen::Index(frames), options.raw_channels);
  const auto* p = reinterpret_cast<const unsigned char*>(bytes.data());
  for (std::size_t f = 0; f < frames; ++f)
    for (int c = 0; c < options.raw_channels; ++c) {
      const unsigned char* q = p + f * frame_bytes + std::size_t(c) * width;
      double v;
      if (width == 2) {
        v = double(std::int16_t(std::uint16_t(q[0] | (q[1] << 8))));
      } else {
        const std::uint32_t u = std::uint32_t(q[0]) | std::uint32_t(q[1]) << 8 | std::uint32_t(q[2]) << 16 |
                                std::uint32_t(q[3]) << 24;
        float x;
        std::memcpy(&x, &u, 4);
        v = x;
      }
      s.samples(Eigen::Index(f), c) = v;
    }
  s.channel_names = default_signal_channel_names(options.raw_channels);
  check_finite(s, path);
  return s;
}

// ---------------------------------------------------------------- writers

std::string format_csv_value(double v, SampleType type) {
  std::array<char, 64> buffer{};
  if (type == SampleType::integer_text) {
    auto [ptr, ec] = std::to_chars(buffer.data(), buffer.data() + buffer.size(), v, std::chars_format::fixed, 0);
    std::string s(buffer.data(), ptr);
    return s == "-0" ? "0" : s;
  }
  auto [ptr, ec] = std::to_chars(buffer.data(), buffer.data() + buffer.size(), v);  // shortest round-trip
  return std::string(buffer.data(), ptr);
}

std::string encode_csv(const Eigen::MatrixXd& x, const Signal& like) {
  std::string out;
  const char d = like.csv_delimiter;
  if (like.csv_header) {
    for (std::size_t c = 0; c < like.channel_names.size(); ++c) {
      if (c) out += d;
      out += like.channel_names[c];
    }
    out += '\n';
  }
  for (Eigen::Index f = 0; f < x.rows(); ++f) {
    for (Eigen::Index c = 0; c < x.cols(); ++c) {
      if (c) out += d;
      out += format_csv_value(x(f, c), like.sample_type);
    }
    out += '\n';
  }
  return out;
}

std::string encode_raw(const Eigen::MatrixXd& x, const Signal& like) {
  const bool int16 = like.sample_type == SampleType::pcm16;
  const std::size_t width = int16 ? 2 : 4;
  std::string out(std::size_t(x.rows() * x.cols()) * width, '\0');
  auto* p = reinterpret_cast<unsigned char*>(out.data());
  for (Eigen::Index f = 0; f < x.rows(); ++f)
    for (Eigen::Index c = 0; c < x.cols(); ++c) {
      unsigned char* q = p + std::size_t(f * x.cols() + c) * width;
      std::uint32_t u;
      if (int16) {
        u = std::uint16_t(std::int16_t(x(f, c)));
      } else {
        const float v = float(x(f, c));
        std::memcpy(&u, &v, 4);
      }
      for (std::size_t b = 0; b < width; ++b) q[b] = static_cast<unsigned char>(u >> (8 * b));
    }
  return out;
}

// Writes x (T×C) in the format of `like` through the descriptor fd. Returns "" or the reason it failed.
std::string write_sndfile(int fd, const Eigen::MatrixXd& x, const Signal& like) {
  SF_INFO info{};
  info.samplerate = int(std::lround(like.sample_rate));
  info.channels = int(x.cols());
  info.format = like.sndfile_format;
  SNDFILE* file = sf_open_fd(fd, SFM_WRITE, &info, SF_FALSE);
  if (!file) return sf_strerror(nullptr);
  if (like.channel_names != default_signal_channel_names(int(x.cols())) &&
      int(like.channel_names.size()) == int(x.cols())) {
    std::string comment = kChannelComment;
    for (std::size_t c = 0; c < like.channel_names.size(); ++c)
      comment += (c ? ", " : "") + like.channel_names[c];
    sf_set_string(file, SF_STR_COMMENT, comment.c_str());  // formats without strings ignore it
  }
  const SubtypeInfo sub = subtype_info(like.sndfile_format);
  const bool integer = sub.type == SampleType::pcm8 || sub.type == SampleType::pcm16 ||
                       sub.type == SampleType::pcm24 || sub.type == SampleType::pcm32;
  if (sub.type == SampleType::float32 || sub.type == SampleType::float64) {
    sf_command(file, SFC_SET_NORM_DOUBLE, nullptr, SF_FALSE);
  }
  const Eigen::Index channels = x.cols();
  constexpr Eigen::Index kBlock = 8192;
  std::vector<int> ints(integer ? std::size_t(kBlock * channels) : 0);
  std::vector<double> reals(integer ? 0 : std::size_t(kBlock * channels));
  bool ok = true;
  for (Eigen::Index start = 0; ok && start < x.rows(); start += kBlock) {
    const Eigen::Index n = std::min(kBlock, x.rows() - start);
    for (Eigen::Index f = 0; f < n; ++f)
      for (Eigen::Index c = 0; c < channels; ++c) {
        const std::size_t i = std::size_t(f * channels + c);
        if (integer) {
          // Left-align in 32 bits, as sf_write_int expects (values are in range).
          ints[i] = int(std::uint32_t(std::int32_t(x(start + f, c))) << sub.shift);
        } else {
          reals[i] = x(start + f, c);
        }
      }
    const sf_count_t wrote = integer ? sf_writef_int(file, ints.data(), n) : sf_writef_double(file, reals.data(), n);
    ok = wrote == n;
  }
  const std::string reason = ok ? "" : sf_strerror(file);
  const bool closed = sf_close(file) == 0;
  if (!reason.empty() || closed) return reason;
  return sf_strerror(nullptr);
}

}  // namespace

std::vector<std::string> default_signal_channel_names(int channels) {
  if (channels == 1) return {"mono"};
  if (channels == 2) return {"left", "right"};
  std::vector<std::string> names;
  for (int c = 0; c < channels; ++c) names.push_back("ch" + std::to_string(c + 1));
  return names;
}

bool has_signal_extension(const std::string& path) {
  static const char* known[] = {".wav",  ".flac", ".ogg", ".oga", ".opus", ".aiff", ".aif", ".aifc", ".au",
                                ".snd",  ".caf",  ".w64", ".rf64", ".csv", ".tsv",  ".raw", ".pcm"};
  const std::string ext = lower_extension(path);
  return std::any_of(std::begin(known), std::end(known), [&](const char* k) { return ext == k; });
}

Signal read_signal(const std::string& path, const SignalReadOptions& options) {
  const std::string bytes = read_file(path);
  if (bytes.empty()) throw data_error(path + ": empty file");
  const std::string ext = lower_extension(path);
  Signal s;
  if (!options.raw_type.empty() || is_raw_extension(ext)) s = read_raw(bytes, path, options);
  else if (is_csv_extension(ext)) s = read_csv(bytes, path, options);
  else s = read_sndfile(bytes, path, options.max_frames);
  if (s.format != SignalFormat::sndfile) {
    if (options.rate < 0 || !std::isfinite(options.rate)) throw usage_error("--rate must be a positive number of Hz");
    s.sample_rate_given = options.rate > 0;
    s.sample_rate = options.rate > 0 ? options.rate : 1.0;
  }
  return s;
}

std::pair<double, double> sample_range(SampleType type) {
  switch (type) {
    case SampleType::pcm8: return {-128.0, 127.0};
    case SampleType::pcm16: return {-32768.0, 32767.0};
    case SampleType::pcm24: return {-8388608.0, 8388607.0};
    case SampleType::pcm32: return {-2147483648.0, 2147483647.0};
    default: return {-std::numeric_limits<double>::infinity(), std::numeric_limits<double>::infinity()};
  }
}

Eigen::MatrixXd conform_to_sample_type(const Eigen::MatrixXd& samples, const Signal& like, std::size_t* clipped) {
  Eigen::MatrixXd out(samples.rows(), samples.cols());
  const auto [low, high] = sample_range(like.sample_type);
  const SampleType t = like.sample_type;
  const bool rounds = t == SampleType::pcm8 || t == SampleType::pcm16 || t == SampleType::pcm24 ||
                      t == SampleType::pcm32 || t == SampleType::integer_text;
  std::size_t count = 0;
  for (Eigen::Index i = 0; i < samples.size(); ++i) {
    double v = samples.data()[i];
    if (std::isnan(v)) {
      v = 0.0;
      ++count;
    }
    if (rounds) v = std::round(v);  // half away from zero
    if (v < low) {
      v = low;
      ++count;
    } else if (v > high) {
      v = high;
      ++count;
    }
    if (t == SampleType::float32 || t == SampleType::lossy) v = double(float(v));
    out.data()[i] = v;
  }
  if (clipped) *clipped = count;
  return out;
}

void write_signal(const std::string& path, const Eigen::MatrixXd& samples, const Signal& like, std::size_t* clipped) {
  if (samples.cols() != like.channels() || samples.rows() < 1) {
    throw usage_error(path + ": cannot write " + std::to_string(samples.cols()) + " channel(s) in the layout of a " +
                      std::to_string(like.channels()) + "-channel recording");
  }
  const Eigen::MatrixXd x = conform_to_sample_type(samples, like, clipped);
  switch (like.format) {
    case SignalFormat::csv: write_file_atomic(path, encode_csv(x, like)); break;
    case SignalFormat::raw: write_file_atomic(path, encode_raw(x, like)); break;
    case SignalFormat::sndfile: {
      AtomicFile file(path);
      const std::string reason = write_sndfile(file.fd(), x, like);
      if (!reason.empty()) throw data_error(path + ": cannot write " + describe_format(like) + " (" + reason + ")");
      file.commit();
      break;
    }
  }
}

std::string signal_extension(const Signal& like, const std::string& input_path) {
  const std::string ext = std::filesystem::path(input_path).extension().string();
  switch (like.format) {
    case SignalFormat::csv: return ext.empty() ? ".csv" : ext;
    case SignalFormat::raw: return ext.empty() ? ".raw" : ext;
    case SignalFormat::sndfile: break;
  }
  if (!ext.empty()) return ext;
  switch (like.sndfile_format & SF_FORMAT_TYPEMASK) {
    case SF_FORMAT_FLAC: return ".flac";
    case SF_FORMAT_OGG: return ".ogg";
    case SF_FORMAT_AIFF: return ".aiff";
    default: return ".wav";
  }
}

std::string describe_sample_type(SampleType type) {
  switch (type) {
    case SampleType::pcm8: return "PCM 8-bit";
    case SampleType::pcm16: return "PCM 16-bit";
    case SampleType::pcm24: return "PCM 24-bit";
    case SampleType::pcm32: return "PCM 32-bit";
    case SampleType::float32: return "float 32-bit";
    case SampleType::float64: return "float 64-bit";
    case SampleType::integer_text: return "whole numbers (text)";
    case SampleType::real_text: return "real numbers (text)";
    case SampleType::lossy: return "lossy codec (decoded to floats)";
  }
  return "unknown";
}

std::string describe_format(const Signal& s) {
  switch (s.format) {
    case SignalFormat::csv: return "CSV";
    case SignalFormat::raw: return "raw little-endian";
    case SignalFormat::sndfile: break;
  }
  SF_FORMAT_INFO info{};
  info.format = s.sndfile_format & SF_FORMAT_TYPEMASK;
  if (sf_command(nullptr, SFC_GET_FORMAT_INFO, &info, sizeof(info)) == 0 && info.name) {
    std::string name = info.name;
    const auto paren = name.find(" (");
    return paren == std::string::npos ? name : name.substr(0, paren);
  }
  return "sound file";
}

}  // namespace pcasweep
