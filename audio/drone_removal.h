// DroneCanceller — removes the drone's known partials from the analyzed input and leaves the voice alone.
// Method: an adaptive noise canceller with sinusoidal references, one complex LMS weight per drone partial (B. Widrow
// et al., "Adaptive noise cancelling: principles and applications", Proc. IEEE 63(12), 1692-1716, 1975, section
// "cancelling periodic interference"). Update, notch and voice guards: DEVELOPERS.md, "Methods in detail".
// Thread: the analysis thread. Allocates: in the constructor only. Locks: no.
#pragma once

#include "audio/drone.h"

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace beatless::audio {

struct CancellerConfig {
    double sample_rate_hz = 48000.0;      // input rate
    std::size_t max_partials = 96;        // most drone partials followed (default 96)
    double max_freq_hz = 6000.0;          // partials above are left alone (default 6 kHz)
    double bandwidth_hz = 0.0;            // notch half-bandwidth while the performer sounds (default 0: held)
    double quiet_bandwidth_hz = 3.0;      // ... while the performer is silent (default 3 Hz)
    double recording_bandwidth_hz = 0.3;  // a recording's drone, voice present throughout: one width (default 0.3 Hz)
    double acquire_bandwidth_hz = 12.0;   // notch half-bandwidth right after a restart (default 12 Hz)
    double acquire_s = 0.25;              // how long the acquire notch lasts (default 0.25 s)
    double ramp_s = 0.05;                 // level changes ramp like the drone's (default 50 ms)
    std::size_t block_len_samples = 64;   // phasors are recomputed exactly every block (default 64)
    double history_s = 0.15;              // weights kept for rolling back to before a voice onset (default 0.15 s)
    double min_quiet_s = 0.1;             // a silence shorter than this is a gap between notes (default 0.1 s)
    double quiet_hold_s = 0.03;           // the quiet notch widens only after this much silence (default 30 ms)
    double residue_db = 24.0;     // a pitch this far under the drone, on its partials, is residue (default 24 dB)
    double residue_cents = 15.0;  // ... within this of a drone partial (default 15 cents)
};

class DroneCanceller {
public:
    explicit DroneCanceller(const CancellerConfig& config);  // throws Error on invalid settings

    // The drone's partials: frequencies and relative amplitudes (peak, at
    // level 1). Keeps the learned room response when the frequencies are the
    // same (a timbre change), restarts otherwise. Partials beyond max_freq_hz
    // or max_partials are ignored. Thread: analysis. Allocates: no.
    void set_partials(std::span<const DronePartial> partials) noexcept;

    // Harmonics 1, 2, ... of root_hz with equal amplitudes: a recording's drone
    // whose timbre is unknown. Thread: analysis. Allocates: no.
    void set_harmonics(double root_hz) noexcept;

    // The drone's current linear level (0 = silent: nothing is removed and the
    // weights are kept). Ramps over ramp_s. Thread: analysis. Allocates: no.
    void set_level(double gain, bool immediate = false) noexcept;

    // Removes the drone from in, writing out (may alias in). Thread: analysis.
    // Allocates: no. Locks: no.
    void process(std::span<const float> in, std::span<float> out) noexcept;

    // The performer sounds (true) or is silent. On a silent-to-sounding change,
    // onset_age_samples says how long ago (in input samples) the sound began:
    // the weights go back to their state from before it. Thread: analysis.
    void set_voice(bool sounding, std::size_t onset_age_samples = 0) noexcept;

    void reset() noexcept;  // forget the room response
    std::size_t partial_count() const noexcept { return count_; }
    bool acquiring() const noexcept { return acquire_left_ > 0 && active(); }  // still learning the room
    // True when a tracked pitch is most likely what is left of the drone:
    // within residue_cents of one of its partials (or a subharmonic of one)
    // and more than residue_db below the drone's level at the microphone.
    // Allocates: no.
    bool is_residue(double f0_hz, double level_dbfs) const noexcept;
    bool active() const noexcept { return count_ > 0 && (level_ > 0.0 || level_target_ > 0.0); }
    double partial_freq_hz(std::size_t k) const noexcept { return freq_[k]; }
    // Learned amplitude of partial k in the input (peak, linear), at the current level.
    double partial_amplitude(std::size_t k) const noexcept;
    const CancellerConfig& config() const noexcept { return cfg_; }

private:
    void run_block(const float* in, float* out, std::size_t n, double scale_level) noexcept;

    CancellerConfig cfg_;
    std::size_t count_ = 0;                             // partials in use
    std::size_t groups_ = 0;                            // count_ rounded up to groups of four
    std::vector<double> freq_, amp_, phase_, wr_, wi_;  // per partial: Hz, relative amplitude, phase, W
    std::vector<float> zr_, zi_, cr_, ci_, vr_, vi_;    // per partial, padded to groups of four
    double level_ = 0.0, level_target_ = 0.0, level_step_ = 0.0;
    std::size_t level_left_ = 0;
    double mu_ = 0.0, mu_quiet_ = 0.0, mu_acquire_ = 0.0;
    std::size_t acquire_left_ = 0;  // samples of acquire notch left
    bool sounding_ = false;
    std::uint64_t processed_ = 0, quiet_since_ = 0;  // input samples
    bool quiet_valid_ = false;                       // quiet_w* hold learned weights
    std::vector<double> quiet_wr_, quiet_wi_;        // weights at the last silent moment
    std::vector<double> hist_;                       // ring of past weights: [slot][partial][re, im]
    std::size_t hist_slots_ = 0, hist_head_ = 0, hist_count_ = 0;
    void save_history() noexcept;
};

}  // namespace beatless::audio
