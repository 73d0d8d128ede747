// VibratoCentre — streaming centre pitch of a held note over whole vibrato cycles, with rate, depth and steadiness.
// Method: the whole-period mean (over whole cycles a periodic track averages to its constant term), the cycles found
// by pitch/dsp/whole_cycles.h; a plain mean when there is no vibrato. Steps: DEVELOPERS.md, "Methods in detail".
// Thread: the analysis thread, one at a time. Allocates: in the constructor only. Locks: no.
#pragma once

#include <cstddef>
#include <vector>

namespace beatless::pitch {

struct VibratoConfig {
    double hop_s = 0.005;          // expected frame spacing, for sizing (default 5 ms)
    double window_s = 0.6;         // history searched for whole cycles (default 0.6 s)
    double fallback_s = 0.5;       // plain-mean window when there is no vibrato (default 0.5 s)
    double steady_s = 1.0;         // steadiness window (default 1 s)
    double min_rate_hz = 3.0;      // slowest vibrato (default 3 Hz)
    double max_rate_hz = 10.0;     // fastest vibrato (default 10 Hz)
    double min_depth_cents = 3.0;  // smaller swings count as no vibrato (default 3 cents)
    double max_gap_s = 0.03;       // unvoiced gaps up to this are bridged; longer ones restart (default 30 ms)
    double ref_hz = 440.0;         // reference of push_hz()'s cents (default A4 = 440 Hz)
};

struct VibratoReading {
    bool ready = false;             // at least min frames since the restart
    bool vibrato = false;           // whole cycles were found and used
    double centre_cents = 0.0;      // centre (whole-cycle or plain mean), same units as pushed
    double centre_dev_cents = 0.0;  // centre minus the target; NaN when no target is set
    double rate_hz = 0.0;           // vibrato rate, 0 when none
    double depth_cents = 0.0;       // half the peak-to-peak swing, 0 when none
    int cycles = 0;                 // whole cycles averaged
    double span_start_s = 0.0;      // time span the centre averages
    double span_end_s = 0.0;
    double spread_cents = 0.0;         // standard deviation of the pitch over the last steady_s
    double centre_spread_cents = 0.0;  // standard deviation of the centre over the last steady_s
};

class VibratoCentre {
public:
    explicit VibratoCentre(const VibratoConfig& config = {});  // throws Error on invalid settings

    // Feeds one frame in cents (any reference); unvoiced frames bridge short
    // gaps and restart the estimate after longer ones. Returns the reading.
    // Thread: analysis. Allocates: no. Locks: no.
    const VibratoReading& push(double t_s, double cents, bool voiced) noexcept;

    // Same with f0 in Hz (<= 0 or non-finite = unvoiced), cents against ref_hz.
    const VibratoReading& push_hz(double t_s, double f0_hz) noexcept;

    void set_target_cents(double target_cents) noexcept;  // NaN clears it
    void reset() noexcept;                                // forget the note

    const VibratoReading& reading() const noexcept { return reading_; }
    double centre_hz() const noexcept;  // centre against ref_hz (push_hz units)
    const VibratoConfig& config() const noexcept { return cfg_; }

private:
    void push_value(double t_s, double cents) noexcept;

    VibratoConfig cfg_;
    std::size_t cap_ = 0;         // frames kept
    std::size_t head_ = 0;        // index of the newest frame in [0, cap_)
    std::size_t count_ = 0;       // frames held (<= cap_)
    std::vector<double> t_;       // 2 * cap_: each frame written twice, so any
    std::vector<double> c_;       //   recent run is contiguous
    std::vector<double> centre_;  // centre readings, same layout
    double last_voiced_t_ = -1e300;
    double target_cents_;
    VibratoReading reading_;
};

}  // namespace beatless::pitch
