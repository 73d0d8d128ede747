// DuoVerdict — the one reading a two-voice screen shows: the interval's deviation from its just target, now
// (DESIGN.md, "One reading, one verdict", for a double stop). Method: ours: the newest pair told apart is the
// verdict; silence, one series (a single note, a unison or octave not told apart) and low confidence end it within
// quiet_after_s and it is shown as "last ..."; a new target is believed after two agreeing frames.
// Thread: the screens' (UI) thread. Allocates: in DuoTrace's constructor only.
#pragma once

#include "pitch/measure/two_voice.h"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <vector>

namespace beatless::ui {

enum class DuoState {
    idle,        // nothing heard yet (or since the targets changed)
    live,        // two voices told apart now: the verdict is current
    silent,      // nothing sounds (or no frames arrive): the value shown is the last one
    one_series,  // one harmonic series: a single note, or a unison or octave too close to tell (frame.blend says why)
    uncertain,   // two voices heard with low confidence: the last sure value
};

struct DuoVerdictConfig {
    double quiet_after_s = 0.06;   // silent, one series or unsure this long ends the verdict (default 60 ms)
    double sure_confidence = 0.6;  // two-voice frames below this count as unsure (default 0.6)
    int frames_to_resume = 2;      // sure two-voice frames in a row before the verdict is current again (default 2)
    int frames_to_retarget = 2;    // frames naming a new target in a row before it is believed (default 2)
};

struct DuoVerdict {
    DuoState state = DuoState::idle;
    pitch::TwoVoiceFrame pair{};              // the verdict's two-voice frame (valid when known())
    pitch::Blend blend = pitch::Blend::none;  // why one series, while state is one_series
    double one_f0_hz = 0.0;                   // the one pitch heard, while state is one_series
    double quiet_s = 0.0;                     // not live: for how long

    bool current() const { return state == DuoState::live; }
    bool known() const { return state != DuoState::idle && pair.voices == 2; }  // a value to show, current or last
    // The beat the cue pulses at: the measured one when the partials gave one (the tracker reports none where
    // it disagrees with the pitches: pitch/measure/two_voice.h), else the predicted; NaN when none.
    double beat_hz() const { return beat_measured() ? pair.measured_beat_hz : pair.predicted_beat_hz; }
    bool beat_measured() const { return std::isfinite(pair.measured_beat_hz) && pair.measured_beat_hz > 0.0; }
};

class DuoVerdictTracker {
public:
    explicit DuoVerdictTracker(const DuoVerdictConfig& config = {}) : cfg_(config) {}
    void take(const pitch::TwoVoiceFrame& f) noexcept;  // in stream order. Allocates: no.
    void tick(double dt_s) noexcept;                    // screen time; no frames for quiet_after_s: silent
    void reset() noexcept;
    const DuoVerdict& verdict() const noexcept { return v_; }

private:
    DuoVerdictConfig cfg_;
    DuoVerdict v_;
    double quiet_since_t_s_ = NAN;  // stream time the current quiet run began
    double since_frame_s_ = 0.0;    // screen time since the last frame arrived
    int sure_run_ = 0;
    int retarget_run_ = 0;
};

// The two-voice frames of the last seconds, oldest first, in a ring sized once.
class DuoTrace {
public:
    explicit DuoTrace(std::size_t capacity) : ring_(capacity > 0 ? capacity : 1) {}
    void push(const pitch::TwoVoiceFrame& f) noexcept {
        ring_[head_] = f;
        head_ = (head_ + 1) % ring_.size();
        if (size_ < ring_.size()) ++size_;
    }
    std::size_t size() const noexcept { return size_; }
    const pitch::TwoVoiceFrame& at(std::size_t i) const noexcept {  // 0 = oldest
        return ring_[(head_ + ring_.size() - size_ + i) % ring_.size()];
    }
    void clear() noexcept { size_ = 0; }

private:
    std::vector<pitch::TwoVoiceFrame> ring_;
    std::size_t head_ = 0, size_ = 0;
};

}  // namespace beatless::ui
