// LiveRig — the whole live path on a fake duplex device (tests and bench).
//
// The engine opens FakeAudioSystem's one duplex device; each step hands one
// block of "microphone" to the capture callback and takes one block of
// output from the playback callback, the way a sound card does. The
// microphone is a known voice (precomputed samples) plus, when the drone
// plays, the engine's own output one block later through a SimulatedRoom
// (delay, gain, one-pole low-pass): the microphone hears the loudspeakers.
// After each block the analysis runs in this thread (start(false)), so every
// reading is stamped with the number of samples captured when it was
// published: latency is counted in samples, not wall time. Below it, voices
// with known truth (steps between ratios) and their scoring: the nearest
// target by brute force over the set in every octave, the deviation against
// 1200 log2 of the true ratio, and the coinciding pair's beat |q f_v - p f_r|.
#pragma once

#include "audio/engine.h"
#include "audio/fake_device.h"
#include "audio/room.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/targets.h"
#include "tests/mix_signals.h"

#include <algorithm>
#include <cmath>
#include <string>

#include <memory>
#include <vector>

namespace beatless::test {

struct Stamped {
    pitch::Reading r;
    std::int64_t captured = 0;  // samples captured when r was published
};

struct LiveRig {
    double rate_hz;
    std::size_t block;
    audio::FakeAudioSystem sys;
    audio::Engine engine;
    std::unique_ptr<audio::SimulatedRoom> room;
    std::vector<float> voice;  // the performer, at the microphone
    std::vector<Stamped> readings;
    std::int64_t captured = 0;

    LiveRig(double rate, std::size_t block_len, const audio::EngineConfig& base = {})
        : rate_hz(rate),
          block(block_len),
          sys({audio::fake_device(0, "Fake duplex", 2, 2, rate)}, {rate}),
          engine(with_rate(base, rate, block_len), &sys) {}

    static audio::EngineConfig with_rate(audio::EngineConfig c, double rate, std::size_t block_len) {
        c.sample_rate_hz = rate;
        c.block_len_frames = block_len;
        return c;
    }

    // Opens the device, sets readings and the drone (through a room unless room_cfg.gain == 0).
    void open(const pitch::ReadingConfig& rc, pitch::TargetSet set, const audio::DroneSettings& drone,
              audio::RoomConfig room_cfg) {
        engine.open_input_device("Fake");
        engine.open_output_device("Fake");
        engine.set_readings(rc, std::move(set));
        engine.set_drone(drone);
        engine.start(false);
        room_cfg.sample_rate_hz = rate_hz;
        room = std::make_unique<audio::SimulatedRoom>(room_cfg);
    }

    // Opens with readings against 7/5 over A2 (110 Hz), the set the take and clip tests use.
    void open_7_5_over_a2(const audio::DroneSettings& drone, audio::RoomConfig room_cfg = {}) {
        pitch::ReadingConfig rc;
        rc.root_hz = 110.0;
        pitch::TargetSet set;
        set.targets.push_back({pitch::parse_interval("7/5"), ""});
        open(rc, std::move(set), drone, room_cfg);
    }

    // Runs the voice from where it stopped to its end.
    void run() {
        std::vector<float> in(block), out(2 * block), spk(block, 0.0f);
        pitch::Reading got[512];
        while (static_cast<std::size_t>(captured) + block <= voice.size()) {
            std::copy_n(voice.begin() + captured, block, in.begin());
            room->process_add(spk, in);  // last block's output, heard through the room
            sys.drive(in, out, 1, 2);
            for (std::size_t i = 0; i < block; ++i) spk[i] = out[2 * i];
            captured += static_cast<std::int64_t>(block);
            engine.analyze_available();
            for (std::size_t k; (k = engine.take_readings(got)) > 0;)
                for (std::size_t i = 0; i < k; ++i) readings.push_back({got[i], captured});
        }
    }
};

// ---- Voices with known truth and how readings are scored against it ----

struct Step {
    double start_s, end_s;
    std::string ratio;
    double dev_cents;
};

// A voice singing the steps above root_hz (harmonic, partials falling 1/h).
inline std::vector<float> voice_of(const std::vector<Step>& steps, double root_hz, double rate, double dur_s,
                                   double level) {
    std::vector<float> x(static_cast<std::size_t>(dur_s * rate), 0.0f);
    std::vector<testsig::Note> notes;
    for (const Step& s : steps) {
        testsig::Note n;
        n.start_s = s.start_s;
        n.end_s = s.end_s;
        n.centre_hz = root_hz * pitch::parse_interval(s.ratio).value() * std::exp2(s.dev_cents / 1200.0);
        n.ramp_s = 0.002;
        n.level = level;
        notes.push_back(n);
    }
    testsig::add_voice(x, rate, notes, testsig::rolloff(12, 1.0));
    return x;
}

// The nearest target by brute force: the set member (in any octave) closest in cents.
inline int brute_nearest(const pitch::TargetSet& set, double cents) {
    int best = -1;
    double best_d = 1e300;
    for (std::size_t i = 0; i < set.targets.size(); ++i)
        for (int k = -3; k <= 3; ++k) {
            const double d = std::fabs(cents - set.targets[i].interval.cents() - 1200.0 * k);
            if (d < best_d) {
                best_d = d;
                best = static_cast<int>(i);
            }
        }
    return best;
}

struct StepCheck {
    int readings = 0;
    double worst_dev_err = 0.0;   // |dev - truth| on the steady part
    double worst_beat_err = 0.0;  // |beat - formula| on the steady part, Hz
    bool targets_right = true;
    std::int64_t settle_samples = -1;  // step onset to the first reading that stays settled
};

// Checks the readings of one step against the truth.
inline StepCheck check_step(const std::vector<Stamped>& rs, const Step& st, double root, double rate,
                            const pitch::TargetSet& set, double settle_cents) {
    StepCheck c;
    const pitch::Interval iv = pitch::parse_interval(st.ratio);
    const double f_true = root * iv.value() * std::exp2(st.dev_cents / 1200.0);
    const double cents_true = 1200.0 * std::log2(f_true / root);
    const int want = brute_nearest(set, cents_true);
    const auto onset = static_cast<std::int64_t>(std::ceil(st.start_s * rate));
    // Settling: the earliest reading after the onset from which every reading
    // of the note (up to 50 ms before its end) is on the right target within settle_cents.
    std::int64_t settled_at = -1;
    for (const auto& s : rs) {
        if (s.r.t_s < st.start_s || s.r.t_s > st.end_s - 0.05) continue;
        const bool ok =
            s.r.voiced() && s.r.target_index == want && std::fabs(s.r.dev_cents - st.dev_cents) <= settle_cents;
        if (!ok)
            settled_at = -1;
        else if (settled_at < 0)
            settled_at = s.captured;
    }
    if (settled_at >= 0) c.settle_samples = settled_at - onset;
    for (const auto& s : rs) {
        if (s.r.t_s < st.start_s + 0.3 || s.r.t_s > st.end_s - 0.1) continue;
        ++c.readings;
        c.targets_right = c.targets_right && s.r.target_index == want;
        c.worst_dev_err = std::max(c.worst_dev_err, std::fabs(s.r.dev_cents - st.dev_cents));
        // Helmholtz: the coinciding pair of p/q beats at |q f_voice - p f_root|.
        const pitch::Ratio r = iv.ratio();
        const double beat_true = std::fabs(static_cast<double>(r.den) * f_true - static_cast<double>(r.num) * root);
        c.worst_beat_err = std::max(c.worst_beat_err, std::fabs(s.r.beat_hz - beat_true));
        if (s.r.beat_partial_root != r.num || s.r.beat_partial_voice != r.den) c.targets_right = false;
    }
    return c;
}

}  // namespace beatless::test
