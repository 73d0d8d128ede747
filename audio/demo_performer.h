// DemoPerformer — "Wren", a simulated alto who replaces the microphone (--demo); seeded, so a run is reproducible,
// and the intended pitch is available as truth for tests.
// Method: ours: a harmonic "ah" tone that lands off, corrects, then blooms into vibrato; hold and script modes.
// Her habits in numbers: DEVELOPERS.md, "Methods in detail".
// Thread: the audio or producer thread (render()). Allocates: in the constructor only. Locks: no.
#pragma once

#include "audio/synth.h"

#include <cstdint>
#include <random>
#include <span>
#include <vector>

namespace beatless::audio {

// One scripted note: when it starts, how long it lasts, which target.
struct DemoNote {
    double start_s = 0.0;       // from the performer's first sample
    double dur_s = 1.0;         // sounding time
    double target_cents = 0.0;  // above the root
};

struct DemoConfig {
    double sample_rate_hz = 48000.0;
    double root_hz = 110.0;            // drone root
    std::vector<double> target_cents;  // targets above the root, in cents (at least one)
    double low_hz = 190.0;             // her comfortable range: notes are octave-shifted into it
    double high_hz = 520.0;
    double note_s = 3.5;        // held time per note
    double breath_s = 0.6;      // silence between notes
    double level_dbfs = -20.0;  // RMS of a held note
    std::uint64_t seed = 7;
    bool hold = false;             // hold mode: first target, fixed deviation, no vibrato
    double hold_dev_cents = 0.0;   // deviation in hold mode (+ sharp)
    std::vector<DemoNote> script;  // when not empty: exactly these notes, in time order, not overlapping
    double vibrato_scale = 1.0;    // vibrato depth factor: 1 her own, 0 a straight tone (default 1)
};

struct DemoTruth {
    bool voiced = false;
    int target_index = -1;      // into target_cents, or into script when scripted
    double f0_hz = 0.0;         // instantaneous, with vibrato
    double centre_f0_hz = 0.0;  // without vibrato
    double dev_cents = 0.0;     // centre's deviation from the target
};

class DemoPerformer {
public:
    explicit DemoPerformer(const DemoConfig& config);  // throws Error on bad config

    // Renders the next block (overwrites out). Thread: audio or producer
    // thread. Allocates: no. Locks: no.
    void render(std::span<float> out) noexcept;

    DemoTruth truth() const noexcept { return truth_; }  // at the last rendered sample
    std::int64_t position_samples() const noexcept { return pos_; }
    const DemoConfig& config() const noexcept { return cfg_; }

private:
    void start_note() noexcept;
    double formant_gain(double freq_hz) const noexcept;

    DemoConfig cfg_;
    HarmonicSynth synth_;
    std::mt19937_64 rng_;
    std::vector<double> partials_;
    std::int64_t pos_ = 0;
    std::int64_t note_start_ = 0, note_end_ = 0, next_start_ = 0;
    std::size_t note_index_ = 0;
    double note_target_hz_ = 0.0;
    double start_dev_cents_ = 0.0, final_dev_cents_ = 0.0;
    double vib_rate_hz_ = 5.5, vib_depth_cents_ = 25.0, vib_phase_ = 0.0;
    double gain_ = 0.0;
    double noise_rms_ = 0.0;
    DemoTruth truth_;
};

}  // namespace beatless::audio
