// Generated multi-channel recordings of a vocal group (test-only).
//
// Each voice is a harmonic tone (partials falling 1/h) with sinusoidal
// vibrato in cents around a centre that is exactly `dev_cents` off its just
// target above the root; each microphone also hears every other voice at
// crosstalk_db (and its neighbours in channel order 6 dB louder than that),
// so the mix is known sample by sample (tests/mix_signals.h). The truth for
// the three references follows from the deviations alone: against the fixed
// root dev_i, against the sounding bass dev_i - dev_bass, against the
// least-squares root dev_i - mean(dev) (pitch/theory/chord.h, equal weights).
#pragma once

#include "audio/soundfile.h"
#include "pitch/measure/ensemble_analyzer.h"
#include "pitch/theory/chord.h"
#include "tests/mix_signals.h"

#include <cmath>
#include <string>
#include <vector>

namespace beatless::test {

struct GroupVoice {
    std::string name;        // "Soprano"
    std::size_t voice = 0;   // chord voice
    int channel = 0;         // microphone channel
    double dev_cents = 0.0;  // centre's deviation from the just target (+ sharp)
    double vib_rate_hz = 5.5;
    double vib_depth_cents = 25.0;
    double level = 0.12;  // amplitude of the fundamental at its own microphone
    bool silent = false;  // the microphone is dead: nothing at all on its channel
};

struct GroupTake {
    double rate_hz = 48000.0;
    double dur_s = 3.0;
    double start_s = 0.2;  // the chord starts ...
    double end_s = 2.9;    // ... and ends
    int channels = 4;
    double crosstalk_db = -26.0;  // every other voice at each microphone; neighbours 6 dB louder
    std::vector<float> interleaved;
};

// The players of a group, as the engine takes them.
inline std::vector<pitch::Player> players_of(const std::vector<GroupVoice>& g) {
    std::vector<pitch::Player> out;
    for (const GroupVoice& v : g) out.push_back({v.name, v.voice, v.channel});
    return out;
}

// Renders the group singing `chord` on root_hz into take.interleaved.
inline void render_group(GroupTake& take, const pitch::Chord& chord, double root_hz,
                         const std::vector<GroupVoice>& group) {
    const auto frames = static_cast<std::size_t>(take.dur_s * take.rate_hz);
    std::vector<std::vector<float>> dry;
    for (std::size_t i = 0; i < group.size(); ++i) {
        const GroupVoice& g = group[i];
        std::vector<float> x(frames, 0.0f);
        testsig::Note n;
        n.start_s = take.start_s;
        n.end_s = take.end_s;
        n.centre_hz = root_hz * std::exp2((chord.voice_cents(g.voice) + g.dev_cents) / 1200.0);
        n.vib_rate_hz = g.vib_rate_hz;
        n.vib_depth_cents = g.vib_depth_cents;
        n.vib_phase = 0.7 * static_cast<double>(i);
        n.level = g.level;
        n.ramp_s = 0.02;
        testsig::add_voice(x, take.rate_hz, {n}, testsig::rolloff(16, 1.0));
        dry.push_back(std::move(x));
    }
    const auto ch = static_cast<std::size_t>(take.channels);
    take.interleaved.assign(frames * ch, 0.0f);
    const double far = std::pow(10.0, take.crosstalk_db / 20.0), near = 2.0 * far;
    for (std::size_t i = 0; i < group.size(); ++i) {
        if (group[i].silent) continue;
        const auto c = static_cast<std::size_t>(group[i].channel);
        for (std::size_t k = 0; k < group.size(); ++k) {
            const int dc = std::abs(group[k].channel - group[i].channel);
            const double g = k == i ? 1.0 : dc == 1 ? near : far;
            for (std::size_t f = 0; f < frames; ++f) take.interleaved[f * ch + c] += static_cast<float>(g * dry[k][f]);
        }
    }
}

// Writes interleaved frames as a WAV file (float by default).
inline void write_take(const std::string& path, double rate_hz, int channels, const std::vector<float>& interleaved,
                       audio::SampleFormat format = audio::SampleFormat::float32) {
    audio::SoundWriter w(path, rate_hz, channels, format);
    w.write(interleaved);
    w.close();
}

// The expected deviation of player i under a reference (sounding players only).
inline double expected_dev(const std::vector<GroupVoice>& group, std::size_t i, pitch::ChordReference ref) {
    double mean = 0.0, bass = 0.0;
    std::size_t lowest = 99, count = 0;
    for (const GroupVoice& g : group) {
        if (g.silent) continue;
        mean += g.dev_cents;
        ++count;
        if (g.voice < lowest) {
            lowest = g.voice;
            bass = g.dev_cents;
        }
    }
    mean /= static_cast<double>(count);
    switch (ref) {
        case pitch::ChordReference::fixed_root: return group[i].dev_cents;
        case pitch::ChordReference::sounding_bass: return group[i].dev_cents - bass;
        case pitch::ChordReference::best_fit: return group[i].dev_cents - mean;
    }
    return NAN;
}

}  // namespace beatless::test
