// ChannelChecks — which input channels of an ensemble are silent, and which two carry the same voice (crosstalk,
// a split cable, a microphone turned to the neighbour).
// Method: ours: levels, the RMS difference of two cents tracks and the Pearson correlation of their motion (two
// people never share a vibrato), with hysteresis. Rules: DEVELOPERS.md, "Methods in detail".
// Thread: the analysis thread (push()). Allocates: in the constructor only.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace beatless::pitch {

struct ChannelChecksConfig {
    double hop_s = 0.005;        // frame spacing (default 5 ms)
    double window_s = 1.0;       // history compared (default 1 s)
    double eval_every_s = 0.05;  // how often pairs are compared (default 50 ms)
    double min_overlap = 0.7;    // both voiced in this share of the window (default 0.7)
    double max_rms_cents = 3.0;  // pitch difference, RMS over the window (default 3 cents)
    double still_cents = 2.0;    // a track moving less than this (std) does not need the correlation (default 2 cents)
    double min_correlation = 0.9;    // Pearson r of the two tracks when they move (default 0.9)
    double release_rms_cents = 6.0;  // a flagged pair is released above this (default 6 cents)
    double release_overlap = 0.4;    // ... or below this overlap (default 0.4)
    double equal_db = 3.0;           // levels within this: both channels are copies (default 3 dB)
    double silence_dbfs = -65.0;     // quieter than this is silence (default -65 dBFS RMS)
    double silent_s = 2.0;           // silent this long while another sounds: a silent channel (default 2 s)
};

class ChannelChecks {
public:
    ChannelChecks(std::size_t channels, const ChannelChecksConfig& config = {});  // throws Error on bad settings

    // One frame per channel, all at the same time: f0 (<= 0 unvoiced) and
    // level (dBFS, -inf for digital silence). Thread: analysis. Allocates: no.
    void push(const double* f0_hz, const double* level_dbfs) noexcept;

    std::size_t channels() const noexcept { return n_; }
    bool silent(std::size_t ch) const noexcept { return silent_[ch] != 0; }
    // The channel whose voice ch carries (ch is the copy), or -1.
    int copy_of(std::size_t ch) const noexcept { return copy_of_[ch]; }
    bool same_pair(std::size_t a, std::size_t b) const noexcept;  // a and b flagged as one voice
    void reset() noexcept;
    const ChannelChecksConfig& config() const noexcept { return cfg_; }

private:
    std::size_t pair_index(std::size_t a, std::size_t b) const noexcept;  // a < b
    void evaluate() noexcept;

    ChannelChecksConfig cfg_;
    std::size_t n_ = 0;
    std::size_t cap_ = 0;               // frames in the window
    std::size_t head_ = 0, count_ = 0;  // ring position, frames held
    std::size_t eval_every_ = 1, since_eval_ = 0;
    std::size_t silent_frames_needed_ = 1;
    std::vector<double> cents_;               // [frame][channel], NaN unvoiced
    std::vector<double> level_;               // [frame][channel]
    std::uint64_t frame_ = 0;                 // frames pushed
    std::vector<std::uint64_t> quiet_since_;  // per channel: frame where its silence began
    std::vector<std::uint64_t> voiced_at_;    // per channel: last voiced frame + 1 (0 = never)
    std::vector<std::uint8_t> silent_;
    std::vector<std::uint8_t> flagged_;  // per pair
    std::vector<int> copy_of_;
};

}  // namespace beatless::pitch
