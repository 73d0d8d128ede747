// Take writer — see take_writer.h.
#include "audio/take_writer.h"

#include "pitch/base/error.h"

#include <sndfile.h>

#include <algorithm>
#include <cmath>

namespace beatless::audio {

namespace {

SNDFILE* as_sf(void* p) { return static_cast<SNDFILE*>(p); }

constexpr int kFlac24 = SF_FORMAT_FLAC | SF_FORMAT_PCM_24;

SNDFILE* open_flac_for_writing(const std::string& path, const std::string& shown, double rate_hz, int channels) {
    if (channels < 1 || channels > 8)
        throw Error(shown + ": FLAC holds 1 to 8 channels, not " + std::to_string(channels));
    SF_INFO sfi{};
    sfi.samplerate = static_cast<int>(std::lround(rate_hz));
    sfi.channels = channels;
    sfi.format = kFlac24;
    if (!sf_format_check(&sfi))
        throw Error(shown + ": FLAC cannot hold " + std::to_string(channels) + " channels at " +
                    std::to_string(sfi.samplerate) + " Hz");
    SNDFILE* f = sf_open(path.c_str(), SFM_WRITE, &sfi);
    if (!f) throw Error(shown + ": cannot be written (" + std::string(sf_strerror(nullptr)) + ")");
    return f;
}

// libsndfile's error text without its "System error : " prefix and final full stop ("File too large").
std::string sf_reason(SNDFILE* f) {
    std::string s = sf_strerror(f);
    for (const char* prefix : {"System error : ", "Error : "})
        if (s.rfind(prefix, 0) == 0) s.erase(0, std::char_traits<char>::length(prefix));
    if (!s.empty() && s.back() == '.') s.pop_back();
    return s;
}

}  // namespace

std::int32_t pcm24_code(float x) noexcept {
    constexpr double kMax = 8388607.0, kMin = -8388608.0;
    if (!(x == x)) return 0;  // NaN
    const double v = std::clamp(std::round(static_cast<double>(x) * 8388608.0), kMin, kMax);
    return static_cast<std::int32_t>(v);
}

TakeWriter::TakeWriter(const std::string& path, double sample_rate_hz, int channels, const std::string& shown_as)
    : path_(shown_as.empty() ? path : shown_as), channels_(channels) {
    file_ = open_flac_for_writing(path, path_, sample_rate_hz, channels);
}

TakeWriter::~TakeWriter() {
    if (file_) sf_close(as_sf(file_));
}

void TakeWriter::write(std::span<const float> interleaved) {
    if (!file_) throw Error(path_ + ": already closed");
    const std::size_t ch = static_cast<std::size_t>(channels_);
    const std::size_t n = interleaved.size() / ch * ch;
    if (codes_.size() < n) codes_.resize(n);
    // libsndfile's int samples are 32-bit; a 24-bit file keeps the top 24 bits.
    for (std::size_t i = 0; i < n; ++i)
        codes_[i] = static_cast<std::int32_t>(static_cast<std::uint32_t>(pcm24_code(interleaved[i])) << 8);
    const sf_count_t frames = static_cast<sf_count_t>(n / ch);
    if (sf_writef_int(as_sf(file_), codes_.data(), frames) != frames)
        throw Error(path_ + ": write failed (" + sf_reason(as_sf(file_)) + ")");
    frames_ += frames;
}

void TakeWriter::sync() {
    if (file_) sf_write_sync(as_sf(file_));
}

void TakeWriter::close() {
    if (!file_) return;
    SNDFILE* f = as_sf(file_);
    file_ = nullptr;
    sf_write_sync(f);
    const int rc = sf_close(f);
    if (rc != 0) throw Error(path_ + ": could not be completed (" + std::string(sf_error_number(rc)) + ")");
}

FlacRepair repair_flac(const std::string& damaged, const std::string& repaired, const std::string& shown_as) {
    SF_INFO in{};
    SNDFILE* src = sf_open(damaged.c_str(), SFM_READ, &in);
    if (!src) throw Error(shown_as + ": cannot be recovered (" + std::string(sf_strerror(nullptr)) + ")");
    FlacRepair r;
    r.rate_hz = in.samplerate;
    r.channels = in.channels;
    SNDFILE* dst = nullptr;
    try {
        dst = open_flac_for_writing(repaired, shown_as, in.samplerate, in.channels);
        std::vector<int> block(4096 * static_cast<std::size_t>(in.channels));
        for (;;) {
            const sf_count_t got = sf_readf_int(src, block.data(), 4096);
            if (got <= 0) break;
            if (sf_writef_int(dst, block.data(), got) != got)
                throw Error(shown_as + ": cannot be recovered (" + std::string(sf_strerror(dst)) + ")");
            r.frames += got;
        }
    } catch (...) {
        sf_close(src);
        if (dst) sf_close(dst);
        throw;
    }
    sf_close(src);
    sf_write_sync(dst);
    if (const int rc = sf_close(dst); rc != 0)
        throw Error(shown_as + ": cannot be recovered (" + std::string(sf_error_number(rc)) + ")");
    if (r.frames == 0) throw Error(shown_as + ": cannot be recovered (no audio could be decoded)");
    return r;
}

}  // namespace beatless::audio
