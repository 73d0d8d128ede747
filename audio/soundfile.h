// Sound files — streamed reading and writing through libsndfile.
//
// SoundReader opens WAV, FLAC, AIFF, Ogg Vorbis (anything libsndfile reads)
// at any rate and channel count and hands out mono blocks: all channels
// mixed (mean) or one chosen channel. Memory is one block, whatever the
// length of the file. Every failure throws beatless::Error naming the file:
// missing, not audio, empty, unsupported rate, channel out of range, and
// non-finite samples (NaN or infinity) with the time where they occur.
// SoundWriter writes mono or interleaved float data as 24-bit or float WAV.
#pragma once

#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

namespace beatless::audio {

constexpr double kMinRateHz = 8000.0;  // rates the analysis supports
constexpr double kMaxRateHz = 192000.0;

struct SoundInfo {
    std::string path;
    double sample_rate_hz = 0.0;
    int channels = 0;
    std::int64_t len_frames = 0;  // frames per channel
    std::string format;           // "WAV", "FLAC", ...
    double dur_s() const { return sample_rate_hz > 0 ? static_cast<double>(len_frames) / sample_rate_hz : 0.0; }
};

class SoundReader {
public:
    // channel: -1 mixes all channels to mono; 0.. picks one (0-based).
    // block_len_frames: largest block read() returns (memory is O(this)).
    explicit SoundReader(const std::string& path, int channel = -1, std::size_t block_len_frames = 4096);
    ~SoundReader();
    SoundReader(const SoundReader&) = delete;
    SoundReader& operator=(const SoundReader&) = delete;

    const SoundInfo& info() const { return info_; }

    // Reads the next mono block into an internal buffer and returns it; an
    // empty span at the end of the file. Throws Error on non-finite samples.
    std::span<const float> read();
    // The next block with every channel, interleaved (info().channels per
    // frame); empty at the end. Throws Error on non-finite samples.
    std::span<const float> read_frames();
    std::int64_t position_frames() const { return pos_frames_; }
    // Back to the first frame, for a second pass. Throws Error naming the
    // file when it cannot seek (a pipe).
    void rewind();
    // To frame `frame` (clamped to the file), the next read starting there. Throws Error naming the file when it
    // cannot seek.
    void seek(std::int64_t frame);

    // Reads the whole file as mono (tests and short files only).
    static std::vector<float> read_all(const std::string& path, int channel = -1, double* rate_hz = nullptr);

private:
    SoundInfo info_;
    int channel_ = -1;
    void* file_ = nullptr;  // SNDFILE*
    std::vector<float> interleaved_;
    std::vector<float> mono_;
    std::int64_t pos_frames_ = 0;
};

enum class SampleFormat { pcm16, pcm24, float32 };

class SoundWriter {
public:
    // shown_as: the name messages use when `path` is a temporary (ui/session/safe_file.h); default `path`.
    SoundWriter(const std::string& path, double sample_rate_hz, int channels, SampleFormat format = SampleFormat::pcm24,
                const std::string& shown_as = {});
    ~SoundWriter();
    SoundWriter(const SoundWriter&) = delete;
    SoundWriter& operator=(const SoundWriter&) = delete;

    void write(std::span<const float> interleaved);  // throws Error on a write failure
    void close();                                    // flushes; throws Error on failure

private:
    std::string path_;
    int channels_ = 1;
    void* file_ = nullptr;
};

// Writes mono samples to a WAV file in one call.
void write_wav(const std::string& path, std::span<const float> mono, double sample_rate_hz,
               SampleFormat format = SampleFormat::pcm24, const std::string& shown_as = {});

}  // namespace beatless::audio
