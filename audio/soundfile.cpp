#include "audio/soundfile.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <sndfile.h>

#include <sys/stat.h>
#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <filesystem>

namespace beatless::audio {

namespace {

SNDFILE* as_sf(void* p) { return static_cast<SNDFILE*>(p); }

std::string major_format_name(int format) {
    SF_FORMAT_INFO fi{};
    fi.format = format & SF_FORMAT_TYPEMASK;
    if (sf_command(nullptr, SFC_GET_FORMAT_INFO, &fi, sizeof fi) == 0 && fi.extension) {
        std::string s = fi.extension;
        for (char& c : s) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
        return s;
    }
    return "audio";
}

std::string rate_text(double hz) { return pitch::format_trimmed(hz, 2) + " Hz"; }

}  // namespace

SoundReader::SoundReader(const std::string& path, int channel, std::size_t block_len_frames) : channel_(channel) {
    info_.path = path;
    struct stat st {};
    if (::stat(path.c_str(), &st) != 0) {
        if (errno == ENOENT) throw Error(path + ": no such file");
        throw Error(path + ": cannot be opened (" + std::strerror(errno) + ")");
    }
    if (S_ISDIR(st.st_mode)) throw Error(path + ": is a directory, not a sound file");
    // A stream has no length to seek in, and a device (/dev/zero) never ends: only files.
    if (S_ISFIFO(st.st_mode))
        throw Error(path + ": is a pipe (FIFO), not a sound file; save the sound to a file first");
    if (S_ISCHR(st.st_mode) || S_ISBLK(st.st_mode)) throw Error(path + ": is a device, not a sound file");
    if (!S_ISREG(st.st_mode)) throw Error(path + ": is a socket or other special file, not a sound file");
    if (st.st_size == 0) throw Error(path + ": is empty (0 bytes)");

    SF_INFO sfi{};
    SNDFILE* f = sf_open(path.c_str(), SFM_READ, &sfi);
    if (!f) {
        const std::string why = sf_strerror(nullptr);
        if (why.find("ermission") != std::string::npos) throw Error(path + ": cannot be read (permission denied)");
        throw Error(path + ": not a sound file that can be read (" + why + ")");
    }
    file_ = f;
    info_.sample_rate_hz = sfi.samplerate;
    info_.channels = sfi.channels;
    info_.len_frames = sfi.frames;
    info_.format = major_format_name(sfi.format);
    const auto cleanup_and_throw = [&](const std::string& msg) {
        sf_close(f);
        file_ = nullptr;
        throw Error(msg);
    };
    if (info_.sample_rate_hz < kMinRateHz || info_.sample_rate_hz > kMaxRateHz)
        cleanup_and_throw(path + ": sample rate " + rate_text(info_.sample_rate_hz) + " is not supported (" +
                          rate_text(kMinRateHz) + " to " + rate_text(kMaxRateHz) + ")");
    if (info_.channels < 1) cleanup_and_throw(path + ": has no audio channels");
    // A stream cut short (a FLAC take whose header was never finished) has an unknown length: counted by decoding.
    if (info_.len_frames == SF_COUNT_MAX) {
        std::vector<float> scratch(4096 * static_cast<std::size_t>(std::max(1, info_.channels)));
        info_.len_frames = 0;
        for (sf_count_t n; (n = sf_readf_float(f, scratch.data(), 4096)) > 0;) info_.len_frames += n;
        if (sf_seek(f, 0, SEEK_SET) != 0)
            cleanup_and_throw(path + ": cut short, and cannot be read again from its start");
    }
    if (info_.len_frames <= 0) cleanup_and_throw(path + ": contains no audio (0 frames)");
    if (channel_ >= info_.channels || channel_ < -1)
        cleanup_and_throw(
            path + ": channel " + std::to_string(channel_ + 1) + " does not exist (the file has " +
            std::to_string(info_.channels) +
            (info_.channels == 1 ? " channel)" : " channels, 1 to " + std::to_string(info_.channels) + ")"));
    // Integer files are scaled to [-1, 1); float files are passed through
    // unclipped so that non-finite and over-range samples can be detected.
    sf_command(f, SFC_SET_NORM_FLOAT, nullptr, SF_TRUE);
    if (block_len_frames == 0) block_len_frames = 4096;
    interleaved_.resize(block_len_frames * static_cast<std::size_t>(info_.channels));
    mono_.resize(block_len_frames);
}

SoundReader::~SoundReader() {
    if (file_) sf_close(as_sf(file_));
}

void SoundReader::rewind() {
    if (!file_) return;
    if (sf_seek(as_sf(file_), 0, SEEK_SET) != 0)
        throw Error(info_.path + ": cannot be read a second time (it cannot seek: a pipe?)");
    pos_frames_ = 0;
}

void SoundReader::seek(std::int64_t frame) {
    if (!file_) return;
    frame = std::clamp<std::int64_t>(frame, 0, info_.len_frames);
    if (sf_seek(as_sf(file_), static_cast<sf_count_t>(frame), SEEK_SET) < 0)
        throw Error(info_.path + ": cannot seek to frame " + std::to_string(frame));
    pos_frames_ = frame;
}

std::span<const float> SoundReader::read() {
    if (!file_) return {};
    const std::size_t ch = static_cast<std::size_t>(info_.channels);
    const sf_count_t want = static_cast<sf_count_t>(mono_.size());
    const sf_count_t got = sf_readf_float(as_sf(file_), interleaved_.data(), want);
    if (got <= 0) return {};
    const std::size_t n = static_cast<std::size_t>(got);
    if (ch == 1) {  // a mono file (the usual take): its samples as they are, checked in one pass
        std::copy(interleaved_.begin(), interleaved_.begin() + static_cast<std::ptrdiff_t>(n), mono_.begin());
        if (std::all_of(mono_.begin(), mono_.begin() + static_cast<std::ptrdiff_t>(n),
                        [](float v) { return std::isfinite(v); })) {
            pos_frames_ += got;
            return {mono_.data(), n};
        }
    }
    for (std::size_t i = 0; i < n; ++i) {
        float v;
        if (channel_ >= 0) {
            v = interleaved_[i * ch + static_cast<std::size_t>(channel_)];
        } else {
            float s = 0.0f;
            for (std::size_t c = 0; c < ch; ++c) s += interleaved_[i * ch + c];
            v = s / static_cast<float>(ch);
        }
        if (!std::isfinite(v)) {
            const double t = static_cast<double>(pos_frames_ + static_cast<std::int64_t>(i)) / info_.sample_rate_hz;
            throw Error(info_.path + ": contains a non-finite sample (NaN or infinity) at " +
                        pitch::format_trimmed(t, 4) + " s");
        }
        mono_[i] = v;
    }
    pos_frames_ += got;
    return {mono_.data(), n};
}

std::span<const float> SoundReader::read_frames() {
    if (!file_) return {};
    const sf_count_t got = sf_readf_float(as_sf(file_), interleaved_.data(), static_cast<sf_count_t>(mono_.size()));
    if (got <= 0) return {};
    const std::size_t ch = static_cast<std::size_t>(info_.channels);
    const std::size_t n = static_cast<std::size_t>(got) * ch;
    for (std::size_t i = 0; i < n; ++i) {
        if (std::isfinite(interleaved_[i])) continue;
        const double t = static_cast<double>(pos_frames_ + static_cast<std::int64_t>(i / ch)) / info_.sample_rate_hz;
        throw Error(info_.path + ": contains a non-finite sample (NaN or infinity) in channel " +
                    std::to_string(i % ch + 1) + " at " + pitch::format_trimmed(t, 4) + " s");
    }
    pos_frames_ += got;
    return {interleaved_.data(), n};
}

std::vector<float> SoundReader::read_all(const std::string& path, int channel, double* rate_hz) {
    SoundReader r(path, channel);
    if (rate_hz) *rate_hz = r.info().sample_rate_hz;
    std::vector<float> out;
    out.reserve(static_cast<std::size_t>(r.info().len_frames));
    for (auto b = r.read(); !b.empty(); b = r.read()) out.insert(out.end(), b.begin(), b.end());
    return out;
}

SoundWriter::SoundWriter(const std::string& path, double sample_rate_hz, int channels, SampleFormat format,
                         const std::string& shown_as)
    : path_(shown_as.empty() ? path : shown_as), channels_(channels) {
    if (channels < 1) throw Error(path_ + ": cannot write a sound file with " + std::to_string(channels) + " channels");
    SF_INFO sfi{};
    sfi.samplerate = static_cast<int>(std::lround(sample_rate_hz));
    sfi.channels = channels;
    const int sub = format == SampleFormat::pcm16   ? SF_FORMAT_PCM_16
                    : format == SampleFormat::pcm24 ? SF_FORMAT_PCM_24
                                                    : SF_FORMAT_FLOAT;
    sfi.format = SF_FORMAT_WAV | sub;
    SNDFILE* f = sf_open(path.c_str(), SFM_WRITE, &sfi);
    if (!f) throw Error(path_ + ": cannot be written (" + std::string(sf_strerror(nullptr)) + ")");
    // Integer output clips rather than wraps if a sample exceeds full scale.
    sf_command(f, SFC_SET_CLIPPING, nullptr, SF_TRUE);
    file_ = f;
}

SoundWriter::~SoundWriter() {
    if (file_) sf_close(as_sf(file_));
}

void SoundWriter::write(std::span<const float> interleaved) {
    if (!file_) throw Error(path_ + ": already closed");
    const sf_count_t frames = static_cast<sf_count_t>(interleaved.size() / static_cast<std::size_t>(channels_));
    if (sf_writef_float(as_sf(file_), interleaved.data(), frames) != frames)
        throw Error(path_ + ": write failed (" + std::string(sf_strerror(as_sf(file_))) + ")");
}

void SoundWriter::close() {
    if (!file_) return;
    sf_write_sync(as_sf(file_));
    const int rc = sf_close(as_sf(file_));
    file_ = nullptr;
    if (rc != 0) throw Error(path_ + ": could not be completed (" + std::string(sf_error_number(rc)) + ")");
}

void write_wav(const std::string& path, std::span<const float> mono, double sample_rate_hz, SampleFormat format,
               const std::string& shown_as) {
    SoundWriter w(path, sample_rate_hz, 1, format, shown_as);
    w.write(mono);
    w.close();
}

}  // namespace beatless::audio
