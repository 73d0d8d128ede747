// Take writer — a take's sound as FLAC through libsndfile: 24-bit PCM, any channel count, written in blocks and
// synced to disk on request, so a killed program loses only what was not yet synced; and the repair of a FLAC file
// cut short (its STREAMINFO never rewritten): every frame libsndfile can still decode, written again as a whole file.
// Samples are quantised by round(x * 2^23), clipped to [-2^23, 2^23 - 1] and written as integers, so a take read back
// as float (libsndfile divides 24-bit PCM by 2^23) is exactly the quantised input; 16- and 24-bit input is kept bit
// for bit. Thread: the writer's own (never the audio callback). Throws Error naming the file.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <vector>

namespace beatless::audio {

// The 24-bit code of a float sample (round half away from zero, clipped), as libsndfile's integer scale holds it.
std::int32_t pcm24_code(float x) noexcept;
// The float a 24-bit code reads back as: code / 2^23.
inline float pcm24_value(std::int32_t code) noexcept { return static_cast<float>(code) / 8388608.0f; }

class TakeWriter {
public:
    // Creates `path` (FLAC, 24-bit). shown_as: the name messages use; default `path`.
    TakeWriter(const std::string& path, double sample_rate_hz, int channels, const std::string& shown_as = {});
    ~TakeWriter();  // closes quietly when close() was not called
    TakeWriter(const TakeWriter&) = delete;
    TakeWriter& operator=(const TakeWriter&) = delete;

    // Appends interleaved frames (channels() floats each). Allocates only when a block is longer than any before.
    void write(std::span<const float> interleaved);
    // Hands everything encoded so far to the disk (fsync).
    void sync();
    // Finishes the file (STREAMINFO with the length); throws Error on failure.
    void close();

    int channels() const { return channels_; }
    std::int64_t frames_written() const { return frames_; }

private:
    std::string path_;
    int channels_ = 1;
    void* file_ = nullptr;  // SNDFILE*
    std::vector<std::int32_t> codes_;
    std::int64_t frames_ = 0;
};

struct FlacRepair {
    std::int64_t frames = 0;  // frames decoded and kept
    double rate_hz = 0.0;
    int channels = 0;
};

// Decodes what libsndfile can read of `damaged` and writes it, whole, to `repaired` (a new FLAC, 24-bit). Throws
// Error naming `shown_as` when nothing can be read.
FlacRepair repair_flac(const std::string& damaged, const std::string& repaired, const std::string& shown_as);

}  // namespace beatless::audio
