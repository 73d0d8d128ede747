// DemoEnsemble — "the Saltmarsh Four", a simulated vocal group with one microphone per singer, for `beatless
// ensemble --demo` and the Ensemble screen without hardware; seeded, and each voice's centre is truth for tests.
// Method: ours: phrases of a held chord, each singer off in their own way, with crosstalk between microphones.
// The singers' habits and the hold mode: DEVELOPERS.md, "Methods in detail".
// Thread: the producer or audio thread (render()). Allocates: in the constructor only. Locks: no.
#pragma once

#include "audio/synth.h"

#include <cstdint>
#include <memory>
#include <random>
#include <span>
#include <vector>

namespace beatless::audio {

constexpr std::size_t kMaxDemoSingers = 8;
// Hold mode: singer k sits this far from hold_dev_cents (cents).
inline constexpr double kHoldOffsetsCents[kMaxDemoSingers] = {+6.0, -4.0, +2.0, -8.0, +3.0, -2.0, +5.0, -6.0};

struct DemoEnsembleConfig {
    double sample_rate_hz = 48000.0;
    double root_hz = 130.8128;           // the chord root (C3)
    std::vector<double> voice_cents;     // per singer: the voice above the root (cents), 1..8 singers
    std::vector<int> channel_of_singer;  // per singer: the microphone channel (default 0, 1, 2 ...)
    int channels = 0;                    // channels rendered (default: the highest channel + 1)
    double phrase_s = 6.0;               // a held chord (default 6 s)
    double breath_s = 0.8;               // silence between phrases (default 0.8 s)
    double level_dbfs = -22.0;           // RMS of one voice at its own microphone (default -22 dBFS)
    double crosstalk_db = -20.0;         // a neighbour's voice at a microphone (default -20 dB; -inf = none)
    std::uint64_t seed = 11;
    bool hold = false;            // hold mode (see above)
    double hold_dev_cents = 0.0;  // the group's common deviation in hold mode (+ sharp)
};

struct DemoSingerTruth {
    bool voiced = false;
    double f0_hz = 0.0;         // instantaneous, with vibrato
    double centre_f0_hz = 0.0;  // without vibrato
    double dev_cents = 0.0;     // centre's deviation from the just voice above the root
};

class DemoEnsemble {
public:
    explicit DemoEnsemble(const DemoEnsembleConfig& config);  // throws Error on a bad config
    ~DemoEnsemble();

    // Renders the next frames, interleaved over channels() (overwrites out;
    // out.size() must be a multiple of channels()). Thread: producer or
    // audio thread. Allocates: no. Locks: no.
    void render(std::span<float> interleaved) noexcept;

    int channels() const noexcept { return channels_; }
    std::size_t singers() const noexcept { return singers_.size(); }
    DemoSingerTruth truth(std::size_t singer) const noexcept;  // at the last rendered frame
    std::int64_t position_frames() const noexcept { return pos_; }
    const DemoEnsembleConfig& config() const noexcept { return cfg_; }

private:
    struct Singer;
    void start_phrase() noexcept;

    DemoEnsembleConfig cfg_;
    int channels_ = 0;
    std::vector<std::unique_ptr<Singer>> singers_;
    std::mt19937_64 rng_;
    std::vector<float> voice_buf_;  // [singer][frame] for one block
    std::int64_t pos_ = 0;
    std::int64_t phrase_start_ = 0, phrase_end_ = 0, next_start_ = 0;
    int phrase_ = 0;
};

}  // namespace beatless::audio
