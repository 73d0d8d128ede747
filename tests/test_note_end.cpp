// LevelEnvelope: a note's end from the feedforward drone comb's level, and the analysis with the comb's feedback on.
//
// Sources: the feedforward comb y[n] = x[n] - x[n - D] (J. O. Smith, Physical Audio Signal Processing, W3K 2010,
// "Feedforward Comb Filters") answers a voice that stops at t_e with -x(t - D) alone until t_e + D, then silence; the
// feedback comb's response has echoes -(1 - g) g^(k-1) at k D ("Feedback Comb Filters"), which a tracker hears as the
// voice going on. The notes' ends are held to the analysis's own bar, 30 ms (tests/test_cli_analyze.cpp).
#include "audio/soundfile.h"
#include "pitch/dsp/drone_comb.h"
#include "pitch/measure/note_end.h"
#include "tests/cli.h"
#include "tests/mix_signals.h"
#include "ui/session/take_analysis.h"
#include "ui/session/target_files.h"

#include <doctest/doctest.h>

#include <cmath>
#include <vector>

using namespace beatless;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;
}  // namespace

TEST_CASE("the end is where the feedforward comb's output falls, less one drone period") {
    // A 320 Hz voice from 0.3 to 1.2 s over a 110 Hz drone, combed: the output stops at 1.2 s + 1/110 s.
    for (const double noise : {1e-4, 1e-2}) {
        CAPTURE(noise);
        std::vector<float> x(static_cast<std::size_t>(1.6 * kFs), 0.0f);
        add_tone(x, kFs, 110.0, -1.0, 3.0, 0.15, rolloff(8));
        Note n;
        n.start_s = 0.3;
        n.end_s = 1.2;
        n.centre_hz = 320.0;
        n.level = 0.2;
        add_voice(x, kFs, {n}, {1.0, 0.6, 0.45});
        add_noise(x, noise, 5);
        pitch::DroneComb comb({.sample_rate_hz = kFs, .root_hz = 110.0});
        std::vector<float> y(x.size());
        comb.process(x, y);
        pitch::LevelEnvelope env(kFs, 0.004);
        env.push(y);
        // A tracked end 60 ms late (the echoes at g = 0.5) is drawn back to the voice's own end, within 10 ms.
        CHECK(std::fabs(env.end_before(0.3, 1.26, 1.0 / 110.0) - 1.2) < 0.01);
        // An end already right stays within 10 ms, and the end never moves later.
        CHECK(std::fabs(env.end_before(0.3, 1.2, 1.0 / 110.0) - 1.2) < 0.01);
        CHECK(env.end_before(0.3, 1.19, 1.0 / 110.0) <= 1.19);
    }
}

TEST_CASE("analysis with the comb's feedback at 0.5: every note's end within 30 ms of the truth") {
    // The tritone take (mix_signals.h drone_and_voice, vibrato 20-45 c, 0.25 s rests) over 110 Hz and 147 Hz drones.
    beatless::test::TempDir dir;
    for (const double root : {110.0, 146.832}) {
        CAPTURE(root);
        const Take take = drone_and_voice(kFs, root, tritone_notes(), 7);
        const std::string wav = dir.file("t.wav");
        audio::write_wav(wav, take.samples, kFs, audio::SampleFormat::float32);
        ui::AnalysisRequest req;
        req.path = wav;
        req.targets = ui::load_target_set("tritones");
        req.comb_feedback = 0.5;
        const ui::OneVoiceAnalysis a = ui::analyze_one_voice(req);
        REQUIRE(a.notes.size() == take.notes.size());
        for (std::size_t i = 0; i < a.notes.size(); ++i) {
            CAPTURE(i);
            CHECK(std::fabs(a.notes[i].end_s - take.notes[i].end_s) < 0.03);
            CHECK(std::fabs(a.notes[i].start_s - take.notes[i].start_s) < 0.03);
        }
    }
}
