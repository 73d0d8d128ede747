// DemoDuo — "Maren", a simulated violinist playing double stops over the drone's root (--demo --voices 2); seeded,
// so a run is reproducible, and both intended pitches are available as truth for tests.
// Method: ours: two bowed-string-like tones (Helmholtz-motion partials |sin(pi l beta)| / l^1.5, bow position
// beta; L. Cremer, The Physics of the Violin, 1984, from memory), the lower string steady, the upper one landing
// off and corrected; bow noise throughout and a short dip with a noise burst at each bow change.
// Thread: the audio or producer thread (render()). Allocates: in the constructor only. Locks: no.
#pragma once

#include "audio/demo_performer.h"
#include "audio/synth.h"

#include <cstdint>
#include <random>
#include <span>
#include <vector>

namespace beatless::audio {

struct DemoDuoConfig {
    double sample_rate_hz = 48000.0;
    double root_hz = 110.0;              // drone root: the lower string plays it, octave-shifted into low_hz ..
    double low_hz = 190.0;               // .. 2 low_hz (a violin's G and D strings)
    std::vector<double> interval_cents;  // the double stops' intervals in turn (empty: 3/2, 7/4, 5/4, 7/5, 6/5, 5/3)
    double stop_s = 4.0;                 // held time per double stop (two bow strokes)
    double lift_s = 0.5;                 // silence between double stops
    double level_dbfs = -20.0;           // RMS of the pair
    double upper_db = -2.0;              // upper string's level against the lower (default -2 dB)
    double bow_noise_db = -32.0;         // bow noise against the pair (default -32 dB)
    std::uint64_t seed = 11;
    // When not empty: these double stops once, in this order (target_cents: the interval; start_s, dur_s: when),
    // silence after the last; a drill's holds (ui/session/drill_runner.h, demo_script). Else the round above.
    std::vector<DemoNote> script;
};

struct DemoDuoTruth {
    bool sounding = false;
    int stop_index = -1;    // into the intervals, in turn
    double f_low_hz = 0.0;  // 0 while silent
    double f_high_hz = 0.0;
    double interval_cents = 0.0;  // the intended (just) interval
    double dev_cents = 0.0;       // the pair's deviation from it now: + wide
};

class DemoDuo {
public:
    explicit DemoDuo(const DemoDuoConfig& config);  // throws Error on bad config

    // Renders the next block (overwrites out). Thread: audio or producer thread. Allocates: no. Locks: no.
    void render(std::span<float> out) noexcept;

    DemoDuoTruth truth() const noexcept { return truth_; }  // at the last rendered sample
    const DemoDuoConfig& config() const noexcept { return cfg_; }

private:
    void start_stop() noexcept;

    DemoDuoConfig cfg_;
    HarmonicSynth low_, high_;
    std::mt19937_64 rng_;
    std::vector<double> partials_;
    std::int64_t pos_ = 0, start_ = 0, end_ = 0, next_ = 0;
    std::size_t index_ = 0;
    double low_hz_ = 0.0, interval_cents_ = 0.0;
    double low_dev_cents_ = 0.0, start_dev_cents_ = 0.0, final_dev_cents_ = 0.0;
    double gain_ = 0.0, noise_rms_ = 0.0, noise_lp_ = 0.0;
    DemoDuoTruth truth_;
};

}  // namespace beatless::audio
