// Test-only signal generators with exactly known content (review tests).
//
// Harmonic tones are summed partial by partial from a phase accumulated in
// double precision: partial h has phase h * Phi(t) + phase_h, where
// Phi(t) = 2 pi * integral of f0. Vibrato is sinusoidal in cents around the
// centre, so the centre is exactly the time average of the pitch in cents
// over whole cycles. Noise is Gaussian from a seeded mt19937_64, so every
// run produces the same samples. PitchFrame paths sample a known f0 path at
// the tracker's hop, the way pitch/dsp/yin.h promises to report it (t = centre
// of the samples an estimate depends on, f0 = 0 when unvoiced).
#pragma once

#include "pitch/dsp/yin.h"
#include "pitch/theory/targets.h"

#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <functional>
#include <initializer_list>
#include <random>
#include <string>
#include <vector>

namespace beatless::testsig {

constexpr double kTwoPi = 6.283185307179586476925286766559;

inline double cents_to_ratio(double cents) { return std::exp2(cents / 1200.0); }

// One held note of a harmonic voice.
struct Note {
    double start_s = 0.0;
    double end_s = 1.0;
    double centre_hz = 220.0;      // vibrato centre
    double vib_rate_hz = 0.0;      // 0 = no vibrato
    double vib_depth_cents = 0.0;  // +- depth
    double vib_phase = 0.0;        // radians
    double scoop_cents = 0.0;      // onset starts this far off and decays ...
    double scoop_tau_s = 0.04;     // ... with this time constant
    double ramp_s = 0.015;         // attack and release ramps (raised cosine)
    double level = 0.3;            // amplitude of the fundamental
};

// Pitch of a note at time t in cents against its centre (no ramp).
inline double note_offset_cents(const Note& n, double t) {
    const double u = t - n.start_s;
    double c = n.vib_depth_cents * std::sin(kTwoPi * n.vib_rate_hz * u + n.vib_phase);
    if (n.scoop_cents != 0.0) c += n.scoop_cents * std::exp(-u / n.scoop_tau_s);
    return c;
}

// Adds a harmonic voice singing `notes` to `out` (sample rate fs). Partial
// h has amplitude level * amps[h-1] and start phase phases[h-1] (0 if absent).
inline void add_voice(std::vector<float>& out, double fs, const std::vector<Note>& notes,
                      const std::vector<double>& amps, const std::vector<double>& phases = {}) {
    for (const Note& n : notes) {
        const auto i0 = static_cast<std::size_t>(std::max(0.0, std::ceil(n.start_s * fs)));
        const auto i1 = std::min(out.size(), static_cast<std::size_t>(std::floor(n.end_s * fs)));
        double phi = 0.0;
        for (std::size_t i = i0; i < i1; ++i) {
            const double t = static_cast<double>(i) / fs;
            const double f0 = n.centre_hz * cents_to_ratio(note_offset_cents(n, t));
            double g = 1.0;
            const double a = t - n.start_s, b = n.end_s - t;
            if (a < n.ramp_s) g *= 0.5 - 0.5 * std::cos(M_PI * a / n.ramp_s);
            if (b < n.ramp_s) g *= 0.5 - 0.5 * std::cos(M_PI * b / n.ramp_s);
            double s = 0.0;
            for (std::size_t h = 1; h <= amps.size(); ++h) {
                if (static_cast<double>(h) * f0 >= 0.45 * fs) break;
                const double ph = h <= phases.size() ? phases[h - 1] : 0.0;
                s += amps[h - 1] * std::sin(static_cast<double>(h) * phi + ph);
            }
            out[i] += static_cast<float>(n.level * g * s);
            phi += kTwoPi * f0 / fs;
        }
    }
}

// A steady harmonic tone over [start_s, end_s) (a drone, or one voice of a double stop).
inline void add_tone(std::vector<float>& out, double fs, double f0_hz, double start_s, double end_s, double level,
                     const std::vector<double>& amps, const std::vector<double>& phases = {}) {
    Note n;
    n.start_s = start_s;
    n.end_s = end_s;
    n.centre_hz = f0_hz;
    n.level = level;
    n.ramp_s = 0.02;
    add_voice(out, fs, {n}, amps, phases);
}

// Gaussian white noise of the given RMS, from a seeded generator.
inline void add_noise(std::vector<float>& out, double rms, std::uint64_t seed) {
    std::mt19937_64 rng(seed);
    std::normal_distribution<double> nd(0.0, rms);
    for (float& x : out) x += static_cast<float>(nd(rng));
}

// Harmonic amplitudes 1/h^tilt for h = 1..count.
inline std::vector<double> rolloff(int count, double tilt = 1.0) {
    std::vector<double> a;
    for (int h = 1; h <= count; ++h) a.push_back(std::pow(static_cast<double>(h), -tilt));
    return a;
}

// Hard clipping at +-limit.
inline void clip(std::vector<float>& x, float limit) {
    for (float& v : x) v = std::max(-limit, std::min(limit, v));
}

// Tracker-like frames of a voice singing `notes`: t every hop_s from 0 to
// dur_s, f0 from the notes' known paths plus Gaussian jitter (cents), 0
// between notes (or the root when drone_leak_hz > 0: the tracker hears the drone).
inline std::vector<pitch::PitchFrame> frames_of(const std::vector<Note>& notes, double dur_s, double hop_s,
                                                double jitter_cents, std::uint64_t seed, double drone_leak_hz = 0.0) {
    std::mt19937_64 rng(seed);
    std::normal_distribution<double> nd(0.0, jitter_cents);
    std::vector<pitch::PitchFrame> out;
    for (long k = 0;; ++k) {
        const double t = static_cast<double>(k) * hop_s;
        if (t > dur_s) break;
        pitch::PitchFrame f;
        f.t_s = t;
        for (const Note& n : notes) {
            if (t >= n.start_s && t < n.end_s) {
                f.f0_hz = n.centre_hz * cents_to_ratio(note_offset_cents(n, t) + nd(rng));
                f.confidence = 0.95;
            }
        }
        if (f.f0_hz == 0.0 && drone_leak_hz > 0.0) {
            f.f0_hz = drone_leak_hz;
            f.confidence = 0.9;
        }
        out.push_back(f);
    }
    return out;
}

// A practice take: a steady drone on root_hz and a voice holding one note
// per (ratio, dev_cents) pair, voice_octaves above, with vibrato (rate
// 5-6.5 Hz, depth 20-45 cents, random phase), an onset scoop, 0.25 s rests,
// and white noise. The exact content is returned with the samples.
struct Take {
    std::vector<float> samples;
    std::vector<Note> notes;  // the voice's notes, centres exact
    double root_hz = 0.0;
    double dur_s = 0.0;
};

// The voice's notes of a take (no audio): see Take.
inline std::vector<Note> take_notes(double root_hz, const std::vector<std::pair<double, double>>& ratio_dev,
                                    std::uint64_t seed, int voice_octaves = 1, double note_s = 1.6,
                                    double voice_level = 0.2) {
    std::mt19937_64 rng(seed);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    std::vector<Note> notes;
    double t = 0.4;
    for (const auto& [ratio, dev] : ratio_dev) {
        Note n;
        n.start_s = t;
        n.end_s = t + note_s;
        n.centre_hz = root_hz * ratio * std::exp2(voice_octaves) * cents_to_ratio(dev);
        n.vib_rate_hz = 5.0 + 1.5 * u(rng);
        n.vib_depth_cents = 20.0 + 25.0 * u(rng);
        n.vib_phase = kTwoPi * u(rng);
        n.scoop_cents = -30.0 * u(rng);
        n.scoop_tau_s = 0.05;
        n.level = voice_level;
        notes.push_back(n);
        t += note_s + 0.25;
    }
    return notes;
}

inline Take drone_and_voice(double fs, double root_hz, const std::vector<std::pair<double, double>>& ratio_dev,
                            std::uint64_t seed, int voice_octaves = 1, double note_s = 1.6, double noise_rms = 1e-3,
                            double drone_level = 0.15, double voice_level = 0.2) {
    Take take;
    take.root_hz = root_hz;
    take.notes = take_notes(root_hz, ratio_dev, seed, voice_octaves, note_s, voice_level);
    take.dur_s = take.notes.back().end_s + 0.55;
    take.samples.assign(static_cast<std::size_t>(take.dur_s * fs), 0.0f);
    if (drone_level > 0.0)
        add_tone(take.samples, fs, root_hz, 0.0, take.dur_s, drone_level, rolloff(8),
                 {0.3, 1.1, 2.0, 0.7, 2.9, 1.6, 0.2, 2.4});
    add_voice(take.samples, fs, take.notes, {1.0, 0.6, 0.45, 0.3, 0.2, 0.15, 0.1, 0.08});
    add_noise(take.samples, noise_rms, seed + 1);
    return take;
}

// A low drone (a bass's or a cellist's, 40-60 Hz) and a voice as loud holding
// 9/8 -3 c, 5/4 +4 c and 4/3 +2 c above it, 2.9 s each, +-15 c vibrato at
// 5.5 Hz, 9 s in all; the voice's partials crowd the drone's within 12 Hz.
inline const std::vector<std::pair<double, double>>& low_take_steps() {
    static const std::vector<std::pair<double, double>> steps = {{9.0 / 8.0, -3.0}, {5.0 / 4.0, 4.0}, {4.0 / 3.0, 2.0}};
    return steps;
}
inline std::vector<float> low_drone_and_voice(double fs, double root_hz) {
    std::vector<float> x(static_cast<std::size_t>(9 * fs), 0.0f);
    add_tone(x, fs, root_hz, 0.0, 9.0, 0.08, rolloff(10));
    std::vector<Note> notes;
    for (std::size_t i = 0; i < low_take_steps().size(); ++i) {
        Note n;
        n.start_s = 0.05 + 3.0 * static_cast<double>(i);
        n.end_s = n.start_s + 2.9;
        n.centre_hz = root_hz * low_take_steps()[i].first * cents_to_ratio(low_take_steps()[i].second);
        n.vib_rate_hz = 5.5;
        n.vib_depth_cents = 15.0;
        n.level = 0.08;
        notes.push_back(n);
    }
    add_voice(x, fs, notes, rolloff(10));
    return x;
}

// Two voices holding double stops one after another: each dyad is a low
// harmonic tone on f_low_hz and a high one `off_cents` off the just ratio
// p/q above it, held hold_s with rest_s between (the first starts at 0.3 s),
// at their own levels, with white noise over the whole take.
struct HeldDyad {
    int p = 3;  // f_high / f_low = p/q before the offset
    int q = 2;
    double off_cents = 0.0;
    double level_low = 0.2;
    double level_high = 0.2;
    double f_low_hz = 200.0;
    double f_high_hz() const { return f_low_hz * p / q * cents_to_ratio(off_cents); }
    double start_s = 0.0;  // set by held_dyads()
};

inline std::vector<float> held_dyads(double fs, std::vector<HeldDyad>& dyads, double hold_s, double rest_s,
                                     double noise_rms, std::uint64_t seed) {
    std::vector<float> x(static_cast<std::size_t>((0.3 + static_cast<double>(dyads.size()) * (hold_s + rest_s)) * fs),
                         0.0f);
    double t = 0.3;
    for (HeldDyad& d : dyads) {
        d.start_s = t;
        add_tone(x, fs, d.f_low_hz, t, t + hold_s, d.level_low, rolloff(10));
        add_tone(x, fs, d.f_high_hz(), t, t + hold_s, d.level_high, rolloff(10),
                 {0.5, 1, 1.5, 2, 2.5, 3, 0.2, 0.4, 0.6, 0.8});
        t += hold_s + rest_s;
    }
    add_noise(x, noise_rms, seed);
    return x;
}

// The five tritone-family targets of the review tests, each mistuned by a known amount.
inline std::vector<std::pair<double, double>> tritone_notes() {
    return {{7.0 / 5.0, -6.0}, {10.0 / 7.0, 4.5}, {11.0 / 8.0, -3.0}, {45.0 / 32.0, 2.0}, {16.0 / 11.0, -8.5}};
}

// Raw little-endian float32 file for the numpy/scipy cross-checks.
inline bool write_f32(const std::string& path, const std::vector<float>& x) {
    std::FILE* f = std::fopen(path.c_str(), "wb");
    if (!f) return false;
    const bool ok = std::fwrite(x.data(), sizeof(float), x.size(), f) == x.size();
    return std::fclose(f) == 0 && ok;
}

// --- Test plumbing ---------------------------------------------------------

// Writes x to a temporary float32 file, runs tests/reference/<script> with
// /usr/bin/python3 (Debian's numpy and scipy) as `script FILE args`, and
// returns the number it prints; NaN when the file, the run or its output fails.
#ifdef BEATLESS_SOURCE_DIR
inline double run_reference(const std::string& script, const std::vector<float>& x, const std::string& args) {
    const char* dir = std::getenv("TMPDIR");
    const std::string path =
        std::string(dir && *dir ? dir : "/tmp") + "/beatless_ref_" + std::to_string(::getpid()) + ".f32";
    if (!write_f32(path, x)) return NAN;
    const std::string cmd =
        "/usr/bin/python3 " BEATLESS_SOURCE_DIR "/tests/reference/" + script + " " + path + " " + args;
    std::FILE* p = popen(cmd.c_str(), "r");
    char line[64] = {};
    const bool got = p && std::fgets(line, sizeof line, p) != nullptr;
    const int rc = p ? pclose(p) : -1;
    std::remove(path.c_str());
    return got && rc == 0 ? std::atof(line) : NAN;
}
#endif

// A target set from interval texts ("7/5", "600c"), in the given order.
inline pitch::TargetSet target_set(std::initializer_list<const char*> intervals, const char* id = "test") {
    pitch::TargetSet set;
    set.id = id;
    for (const char* t : intervals) set.targets.push_back({pitch::parse_interval(t), ""});
    return set;
}

// The intervals of targets/tritones.toml, in the file's order.
inline pitch::TargetSet tritone_set() {
    return target_set({"15/11", "11/8", "7/5", "45/32", "600c", "64/45", "729/512", "1024/729", "10/7", "16/11"},
                      "tritones");
}

// The message of the Error that fn throws, or "(no error)".
template <class E>
std::string error_of(const std::function<void()>& fn) {
    try {
        fn();
    } catch (const E& e) {
        return e.what();
    }
    return "(no error)";
}

}  // namespace beatless::testsig
