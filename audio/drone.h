// Drone — the live drone: root, optional fifth (3/2) and octave (2/1), timbre, level, start and stop, a reference
// voice, and an output limiter with a fixed -6 dBFS ceiling; it starts low (-30 dBFS) and every change ramps.
// Method: HarmonicSynth voices (audio/synth.h) and a look-ahead peak limiter. Detail: DEVELOPERS.md.
// Thread: render() on the audio callback; settings from any thread through a lock-free Latest<DroneSettings>.
// Allocates: in the constructor only. Locks: no.
#pragma once

#include "audio/clip_player.h"
#include "audio/latest.h"
#include "audio/synth.h"
#include "audio/timbre.h"

#include <atomic>
#include <cstdint>
#include <span>
#include <vector>

namespace beatless::audio {

constexpr double kDroneCeilingDbfs = -6.0;      // limiter ceiling, peak dBFS (fixed)
constexpr double kDroneStartLevelDbfs = -30.0;  // level a drone starts at, RMS dBFS
constexpr double kDroneMinLevelDbfs = -80.0;
constexpr double kDroneMaxLevelDbfs = -6.0;

struct DroneSettings {
    bool on = false;         // sounding (start/stop ramp over 50 ms)
    double root_hz = 110.0;  // fundamental of the root (20 Hz .. 2 kHz)
    bool fifth = false;      // add 3/2 above the root
    bool octave = false;     // add 2/1 above the root
    Timbre timbre = Timbre::round;
    double level_dbfs = kDroneStartLevelDbfs;  // RMS of the root tone, -80 .. -6 dBFS
    double reference_hz = 0.0;                 // reference voice pitch (0 = none)
    double reference_s = 1.5;                  // how long it sounds when triggered
    std::uint32_t reference_count = 0;         // bump to trigger the reference voice once more
};

// One partial of what the drone plays: frequency and linear peak amplitude
// (at full level) — what drone removal needs to know about it.
struct DronePartial {
    double freq_hz = 0.0;
    double amplitude = 0.0;
};

// The partials the drone plays for the given settings at level 1 (peak
// amplitudes of each sinusoid, merged where the root's and the fifth's
// coincide), up to max_freq_hz and the band limit of sample_rate_hz.
// Returns how many were written into out. Allocates: no.
std::size_t drone_partials(const DroneSettings& s, double sample_rate_hz, double max_freq_hz,
                           std::span<DronePartial> out) noexcept;

// Linear gain of the drone (the synths' level) for a level in RMS dBFS.
double drone_gain(double level_dbfs) noexcept;

// Checks user values (root range, level range); throws Error naming the value.
void check_drone_settings(const DroneSettings& s);

// The phases of a sounding drone at one instant (its root's and its fifth's fundamentals), so the same drone can be
// rendered again from there, already sounding.
struct DronePhases {
    double root_rad = 0.0;
    double fifth_rad = 0.0;
    bool settled = false;  // at its level, no fade or change under way (else the phases alone do not say it)
};

class Drone {
public:
    explicit Drone(double sample_rate_hz);  // allocates; throws Error on a bad rate

    // Any thread: hands new settings to the renderer (latest wins).
    // Allocates: no. Locks: no.
    void set(const DroneSettings& s) noexcept { pending_.publish(s); }

    // Renders mono into out (overwrites): drone + reference voice + a clip playing (audio/clip_player.h), limited.
    // Thread: audio callback (one thread). Allocates: no. Locks: no.
    void render(std::span<float> out) noexcept;

    // State as the renderer last applied it. Thread: the rendering thread.
    const DroneSettings& applied() const noexcept { return applied_; }
    double limiter_gain() const noexcept { return lim_gain_; }  // 1 when not limiting
    double sample_rate_hz() const noexcept { return rate_hz_; }
    // Any thread: asks for the phases at the start of the next block rendered; phases_taken() is true once they are
    // there (phases_at_request() then holds them). Allocates: no. Locks: no.
    void request_phases() noexcept { phases_taken_.store(false, std::memory_order_release), want_phases_.store(true); }
    bool phases_taken() const noexcept { return phases_taken_.load(std::memory_order_acquire); }
    DronePhases phases_at_request() const noexcept { return taken_; }
    // Offline, before rendering: starts as a drone already sounding with these settings and phases (no fade in).
    void start_sounding(const DroneSettings& s, const DronePhases& p) noexcept;
    // The clip player mixed in before the limiter (its control side: play, stop; any thread may ask busy()).
    ClipPlayer& clip() noexcept { return clip_; }

private:
    void apply(const DroneSettings& s, bool first) noexcept;
    void limit(std::span<float> out) noexcept;

    double rate_hz_;
    Latest<DroneSettings> pending_;
    DroneSettings applied_{};
    bool have_applied_ = false;
    HarmonicSynth root_, fifth_, reference_;
    ClipPlayer clip_;
    std::atomic<bool> want_phases_{false}, phases_taken_{false};
    DronePhases taken_{};              // written by the renderer before phases_taken_ (release)
    std::vector<double> amps_;         // scratch: root partials (+ octave)
    std::int64_t reference_left_ = 0;  // samples until the reference voice fades out
    // Limiter state.
    std::vector<float> delay_;  // look-ahead line
    std::size_t delay_pos_ = 0;
    float peak_ = 0.0f;         // held peak of the look-ahead line
    std::size_t peak_age_ = 0;  // samples since it entered
    double lim_gain_ = 1.0;
    double attack_coef_ = 0.0, release_coef_ = 0.0;
    float ceiling_ = 0.5f;
};

}  // namespace beatless::audio
