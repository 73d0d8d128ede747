// LevelEnvelope — a held note's end placed by the level of the feedforward drone comb's output, which stops one
// drone period after the voice (pitch/dsp/drone_comb.h: -x(t - T) is its only echo), where a tracker behind the
// comb with feedback hears the voice's echoes (g^k at k periods) ring on for 40-70 ms at g = 0.5.
// Method: ours: levels in short frames; the note's held level (median over its body) and the level after it; the end
// is the last frame above the midpoint (in dB) of the two, less one drone period.
// Thread: one at a time. Allocates: in the constructor only (a ring of the last kHistoryS seconds of frames).
#pragma once

#include <span>
#include <vector>

namespace beatless::pitch {

class LevelEnvelope {
public:
    static constexpr double kHistoryS = 4.0;  // frames kept: a note's last 2 s and what follows it
    static constexpr double kAfterS = 0.08;   // the level after a note is read over this long
    LevelEnvelope(double sample_rate_hz, double frame_s);
    // Thread: one at a time. Allocates: no. Locks: no.
    void push(std::span<const float> x) noexcept;
    double time_s() const noexcept { return static_cast<double>(frames_) * frame_s_; }  // end of the last whole frame
    // The end of a note tracked as [start_s, end_s] (end_s late by the comb's echoes), from at most 0.15 s earlier;
    // end_s unchanged when the level does not fall clearly (6 dB) or the frames are no longer kept.
    double end_before(double start_s, double end_s, double period_s) const;

private:
    double frame_s_;
    std::size_t frame_len_;
    std::size_t filled_ = 0;
    double sum_ = 0.0;
    std::vector<float> ring_;  // dBFS per frame
    std::size_t frames_ = 0;   // frames completed
    bool kept(std::size_t i) const { return i < frames_ && i + ring_.size() >= frames_; }
    double median_db(double from_s, double to_s) const;  // NaN when no kept frame lies there
};

}  // namespace beatless::pitch
