// The ensemble path: one microphone per player, through the real engine
// (a fake multi-channel device, or a multi-channel sound file).
//
// Four voices of 4:5:6:7 (the harmonic seventh chord, voices = harmonics 4
// to 7 of one fundamental: Helmholtz 1863, ch. X; common practice), each off
// by a known amount, with vibrato and crosstalk. The truth of each reference
// follows from pitch/theory/chord.h's definitions (see tests/ensemble_signals.h);
// the best-fit root is also checked against numpy's least squares
// (tests/reference/lsq_root.py, numpy.linalg.lstsq and scipy's
// minimize_scalar). Bad inputs: a device with fewer channels than players,
// a silent channel, two channels carrying the same voice.
#include "audio/engine.h"
#include "audio/fake_device.h"
#include "audio/soundfile.h"
#include "pitch/base/error.h"
#include "tests/cli.h"
#include "tests/ensemble_signals.h"

#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <fstream>
#include <sstream>
#include <string>

using namespace beatless;
using pitch::ChordReference;

namespace {

constexpr ChordReference kRefs[] = {ChordReference::fixed_root, ChordReference::sounding_bass,
                                    ChordReference::best_fit};
constexpr double kRootHz = 98.0;  // G2

// The group, listed top down (the order need not follow the chord).
std::vector<test::GroupVoice> quartet() {
    return {
        {"Soprano", 3, 0, +7.5, 5.8, 28.0, 0.12, false},
        {"Alto", 2, 1, -4.0, 5.2, 20.0, 0.12, false},
        {"Tenor", 1, 2, +2.5, 5.5, 24.0, 0.12, false},
        {"Bass", 0, 3, -3.0, 4.9, 15.0, 0.14, false},
    };
}

audio::EnsembleSetup setup_of(const pitch::Chord& chord, const std::vector<test::GroupVoice>& g) {
    audio::EnsembleSetup s;
    s.chord = chord;
    s.players = test::players_of(g);
    s.analysis.root_hz = kRootHz;
    return s;
}

struct Messages {
    std::vector<std::string> lines;
    bool has(const std::string& s) const {
        for (const auto& l : lines)
            if (l == s) return true;
        return false;
    }
};

// Drives the take through a fake device with as many inputs as it has
// channels; with msgs, supervise() runs after every block and its lines are kept.
std::vector<pitch::EnsembleReading> through_device(const test::GroupTake& take, const audio::EnsembleSetup& setup,
                                                   Messages* msgs = nullptr) {
    audio::FakeAudioSystem sys({audio::fake_device(0, "Fake quad box", take.channels, 0, take.rate_hz)},
                               {take.rate_hz});
    audio::EngineConfig ec;
    ec.sample_rate_hz = take.rate_hz;
    audio::Engine eng(ec, &sys);
    if (msgs) eng.on_message([msgs](const std::string& m) { msgs->lines.push_back(m); });
    eng.set_ensemble(setup);
    eng.open_input_device("quad");
    eng.start(false);
    const std::size_t block = 256, ch = static_cast<std::size_t>(take.channels);
    std::vector<pitch::EnsembleReading> out, got(64);
    for (std::size_t f = 0; (f + block) * ch <= take.interleaved.size(); f += block) {
        sys.drive(std::span<const float>(take.interleaved.data() + f * ch, block * ch), {}, take.channels, 2);
        eng.analyze_available();
        for (std::size_t k; (k = eng.take_readings(got)) > 0;)
            out.insert(out.end(), got.begin(), got.begin() + static_cast<std::ptrdiff_t>(k));
        if (msgs) eng.supervise();
    }
    CHECK(eng.status().ring_overflow_events == 0);
    return out;
}

struct Worst {
    double err[3][pitch::kMaxPlayers] = {};
    int counted = 0;
    bool all_sounding = true;
};

Worst score(const std::vector<pitch::EnsembleReading>& rs, const std::vector<test::GroupVoice>& g, double from_s,
            double to_s) {
    Worst w;
    for (const auto& r : rs) {
        if (r.t_s < from_s || r.t_s > to_s) continue;
        ++w.counted;
        for (std::size_t i = 0; i < g.size(); ++i) {
            if (g[i].silent) continue;
            w.all_sounding = w.all_sounding && r.p[i].state == pitch::PlayerState::sounding;
            for (std::size_t k = 0; k < 3; ++k) {
                const double e = std::fabs(r.dev(i, kRefs[k]) - test::expected_dev(g, i, kRefs[k]));
                w.err[k][i] = std::max(w.err[k][i], std::isfinite(e) ? e : 999.0);
            }
        }
    }
    return w;
}

void check_within(const Worst& w, const std::vector<test::GroupVoice>& g, double tol_cents) {
    CHECK(w.counted > 300);
    CHECK(w.all_sounding);
    for (std::size_t k = 0; k < 3; ++k)
        for (std::size_t i = 0; i < g.size(); ++i) {
            if (g[i].silent) continue;
            INFO("reference " << pitch::reference_key(kRefs[k]) << ", " << g[i].name << ": worst " << w.err[k][i]
                              << " cents");
            CHECK(w.err[k][i] <= tol_cents);
        }
}

}  // namespace

TEST_CASE("four voices through a fake multi-channel device: every deviation within 1 cent under each reference") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    const auto g = quartet();
    test::GroupTake take;
    test::render_group(take, chord, kRootHz, g);
    const auto rs = through_device(take, setup_of(chord, g));
    check_within(score(rs, g, 1.0, 2.7), g, 1.0);
}

TEST_CASE("four voices from a multi-channel sound file (--fast path): within 1 cent under each reference") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    auto g = quartet();
    // Other amounts, another channel order, a 44.1 kHz float WAV.
    g[0].dev_cents = -6.0;
    g[1].dev_cents = +9.0;
    g[2].dev_cents = -1.5;
    g[3].dev_cents = +4.0;
    g[0].channel = 3;
    g[3].channel = 0;
    test::GroupTake take;
    take.rate_hz = 44100.0;
    test::render_group(take, chord, kRootHz, g);
    test::TempDir dir;
    const std::string path = dir.file("quartet.wav");
    test::write_take(path, take.rate_hz, take.channels, take.interleaved);
    audio::Engine eng(audio::EngineConfig{}, nullptr);
    eng.set_ensemble(setup_of(chord, g));
    CHECK(eng.use_file(path) == 44100.0);
    std::vector<pitch::EnsembleReading> rs;
    eng.run_fast([&](const pitch::EnsembleReading& r) { rs.push_back(r); });
    CHECK(eng.status().finished);
    check_within(score(rs, g, 1.0, 2.7), g, 1.0);
}

TEST_CASE("the best-fit root against numpy's least squares, on the engine's own centres and on the truth") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    const auto g = quartet();
    test::GroupTake take;
    test::render_group(take, chord, kRootHz, g);
    const auto rs = through_device(take, setup_of(chord, g));
    // Readings at three moments of the held chord.
    std::vector<const pitch::EnsembleReading*> picked;
    for (const auto& r : rs)
        if ((picked.empty() && r.t_s >= 1.0) || (picked.size() == 1 && r.t_s >= 1.8) ||
            (picked.size() == 2 && r.t_s >= 2.6))
            picked.push_back(&r);
    REQUIRE(picked.size() == 3);
    test::TempDir dir;
    const std::string cases = dir.file("cases.txt");
    {
        std::ofstream f(cases);
        f.precision(17);
        // Lines: target cents | Hz | weights (tests/reference/lsq_root.py).
        for (const auto* r : picked) {
            for (std::size_t i = 0; i < g.size(); ++i)
                f << chord.voice_cents(g[i].voice) + 1200.0 * r->p[i].octaves << ' ';
            f << "| ";
            for (std::size_t i = 0; i < g.size(); ++i) f << r->p[i].centre_f0_hz << ' ';
            f << "| 1 1 1 1\n";
        }
        // The truth: the centres the voices were generated with.
        for (std::size_t i = 0; i < g.size(); ++i) f << chord.voice_cents(g[i].voice) << ' ';
        f << "| ";
        for (std::size_t i = 0; i < g.size(); ++i)
            f << kRootHz * std::exp2((chord.voice_cents(g[i].voice) + g[i].dev_cents) / 1200.0) << ' ';
        f << "| 1 1 1 1\n";
    }
    const test::RunResult py = [&] {
        const std::string cmd =
            "/usr/bin/python3 " BEATLESS_SOURCE_DIR "/tests/reference/lsq_root.py " + cases + " 2>&1";
        test::RunResult r;
        std::FILE* p = popen(cmd.c_str(), "r");
        REQUIRE(p != nullptr);
        char buf[256];
        while (std::fgets(buf, sizeof buf, p)) r.out += buf;
        r.exit_code = pclose(p);
        return r;
    }();
    INFO(py.out);
    REQUIRE(py.exit_code == 0);
    std::istringstream in(py.out);
    for (const auto* r : picked) {
        double lstsq = 0, scalar = 0;
        in >> lstsq >> scalar;
        const double engine = r->root_hz[pitch::reference_index(ChordReference::best_fit)];
        CHECK(std::fabs(1200.0 * std::log2(engine / lstsq)) < 1e-6);
        CHECK(std::fabs(1200.0 * std::log2(engine / scalar)) < 1e-3);
    }
    double truth = 0, truth2 = 0;
    in >> truth >> truth2;
    REQUIRE(truth > 0.0);
    for (const auto* r : picked) {
        // The engine's root from measured pitches, against the root the generated voices imply.
        CHECK(std::fabs(1200.0 * std::log2(r->root_hz[pitch::reference_index(ChordReference::best_fit)] / truth)) <
              1.0);
    }
}

// ---------------------------------------------------------------------------
// [SECTION] Bad inputs: clear messages, no crash
// ---------------------------------------------------------------------------

TEST_CASE(
    "a multi-channel device that disappears: readings pause, one line says so, it is reopened and readings resume") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    const auto g = quartet();
    test::GroupTake take;
    test::render_group(take, chord, kRootHz, g);
    audio::FakeAudioSystem sys({audio::fake_device(0, "Fake quad box", take.channels, 0, take.rate_hz)},
                               {take.rate_hz});
    audio::EngineConfig ec;
    ec.sample_rate_hz = take.rate_hz;
    ec.reopen_every_s = 0.0;  // retry at every supervise() in this test
    ec.stall_s = 3600.0;      // only the stream's own state counts here
    audio::Engine eng(ec, &sys);
    std::vector<std::string> msgs;
    eng.on_message([&](const std::string& m) { msgs.push_back(m); });
    eng.set_ensemble(setup_of(chord, g));
    eng.open_input_device("quad");
    eng.start(false);
    const std::size_t block = 256, ch = static_cast<std::size_t>(take.channels), frames = take.interleaved.size() / ch;
    std::vector<pitch::EnsembleReading> got(64);
    auto play = [&](std::size_t from, std::size_t to) {
        for (std::size_t f = from; f + block <= to; f += block) {
            sys.drive(std::span<const float>(take.interleaved.data() + f * ch, block * ch), {}, take.channels, 2);
            eng.analyze_available();
            while (eng.take_readings(got) > 0) {}
        }
    };
    play(0, frames / 2);
    eng.supervise();
    const auto before = eng.status().readings;
    CHECK(before > 50);
    CHECK(eng.status().input_ok);
    const std::size_t kept = msgs.size();  // (channel lines, if any, are not this test's)

    sys.set_present(false);  // the interface's cable pulled
    play(frames / 2, frames);
    eng.supervise();
    REQUIRE(msgs.size() == kept + 1);
    CHECK(msgs.back() ==
          "input device 'Fake quad box' stopped delivering audio; ensemble readings paused; trying to reopen it every "
          "0 s");
    CHECK_FALSE(eng.status().input_ok);
    CHECK(eng.status().readings == before);  // nothing new while it is gone
    eng.supervise();                         // still gone: no new line, no crash
    CHECK(msgs.size() == kept + 1);

    sys.set_present(true);  // plugged back in
    eng.supervise();
    REQUIRE(msgs.size() == kept + 2);
    CHECK(msgs.back() == "input device 'Fake quad box' is back (48000 Hz)");
    CHECK(sys.opens() == 2);
    CHECK(eng.status().input_ok);
    play(0, frames / 2);
    CHECK(eng.status().readings > before + 50);
}

TEST_CASE("a device with fewer channels than players is refused in one line naming it and the counts") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    audio::FakeAudioSystem sys({audio::fake_device(0, "Fake stereo interface", 2, 2)});
    audio::Engine eng(audio::EngineConfig{}, &sys);
    eng.set_ensemble(setup_of(chord, quartet()));
    try {
        eng.open_input_device("");
        FAIL("a 2-channel device was accepted for 4 players");
    } catch (const Error& e) {
        CHECK(std::string(e.what()) ==
              "input device 'Fake stereo interface' has 2 input channels; 4 players on channels 1,2,3,4 need 4");
    }
    // Three players on channels 1 and 2 ... and 5 need five channels, as the message says.
    auto three = quartet();
    three.pop_back();
    three[2].channel = 4;
    eng.set_ensemble(setup_of(chord, three));
    CHECK_THROWS_WITH_AS(
        eng.open_input_device("stereo"),
        "input device 'Fake stereo interface' has 2 input channels; 3 players on channels 1,2,5 need 5", Error);
    // A setup that shares a channel between two players never reaches the device.
    auto shared = quartet();
    shared[1].channel = 0;
    CHECK_THROWS_WITH_AS(eng.set_ensemble(setup_of(chord, shared)),
                         "player 2 (Alto): channel 1 is already player 1's; give each player a channel of their own",
                         Error);
    auto wrong_voice = quartet();
    wrong_voice[0].voice = 4;
    CHECK_THROWS_WITH_AS(eng.set_ensemble(setup_of(chord, wrong_voice)),
                         "player 1 (Soprano): voice 5 is not in the chord 4:5:6:7 (voices 1 to 4)", Error);
}

TEST_CASE("a file with fewer channels than the players need is refused naming the file") {
    test::TempDir dir;
    const std::string path = dir.file("stereo.wav");
    test::write_take(path, 48000.0, 2, std::vector<float>(2 * 4800, 0.1f), audio::SampleFormat::pcm16);
    audio::Engine eng(audio::EngineConfig{}, nullptr);
    eng.set_ensemble(setup_of(pitch::parse_chord("4:5:6:7"), quartet()));
    CHECK_THROWS_WITH_AS(eng.use_file(path),
                         (path + ": player 3 (Tenor): channel 3 does not exist (channels 1 to 2)").c_str(), Error);
}

TEST_CASE("a silent channel: named once, left out of the references, the others still right") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    auto g = quartet();
    g[2].silent = true;  // the tenor's microphone is dead: not even crosstalk
    test::GroupTake take;
    take.dur_s = 4.2;
    take.end_s = 4.1;
    test::render_group(take, chord, kRootHz, g);
    Messages msgs;
    const auto rs = through_device(take, setup_of(chord, g), &msgs);
    INFO("messages: " << msgs.lines.size());
    CHECK(msgs.has("channel 3 (Tenor) is silent while the others sound: check its microphone and cable"));
    CHECK(msgs.lines.size() == 1);
    // Flagged once 2 s of silence have passed while the others sound.
    bool flagged_late = false, flagged_early = false;
    for (const auto& r : rs) {
        if (r.t_s < 2.0 && r.p[2].state == pitch::PlayerState::silent) flagged_early = true;
        if (r.t_s > 2.6 && r.p[2].state == pitch::PlayerState::silent) flagged_late = true;
    }
    CHECK_FALSE(flagged_early);
    CHECK(flagged_late);
    // The three that sing are measured as if the tenor were not there.
    const Worst w = score(rs, g, 1.0, 3.9);
    check_within(w, g, 1.0);
}

TEST_CASE("two channels carrying the same voice: a split source and a microphone that hears only its neighbour") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    const auto g = quartet();
    test::GroupTake take;
    test::render_group(take, chord, kRootHz, g);
    const std::size_t ch = 4, frames = take.interleaved.size() / ch;

    SUBCASE("channel 4 is a copy of channel 3, 6 dB down (one microphone on two inputs)") {
        for (std::size_t f = 0; f < frames; ++f) take.interleaved[f * ch + 3] = 0.5f * take.interleaved[f * ch + 2];
        Messages msgs;
        const auto rs = through_device(take, setup_of(chord, g), &msgs);
        CHECK(msgs.has(
            "channel 4 (Bass) carries the same voice as channel 3 (Tenor); it is 6 dB quieter: its microphone hears "
            "the neighbour (crosstalk) or the two share one source"));
        int copies = 0, tenor_ok = 0;
        for (const auto& r : rs) {
            if (r.t_s < 1.5 || r.t_s > 2.7) continue;
            copies += r.p[3].state == pitch::PlayerState::copy && r.p[3].copy_of == 2;
            tenor_ok += r.p[2].state == pitch::PlayerState::sounding;
        }
        CHECK(copies > 200);
        CHECK(tenor_ok > 200);
    }
    SUBCASE("the alto rests and her microphone hears the tenor beside her at -20 dB") {
        for (std::size_t f = 0; f < frames; ++f) {
            const float tenor_dry = take.interleaved[f * ch + 2];
            take.interleaved[f * ch + 1] = 0.1f * tenor_dry;
        }
        Messages msgs;
        const auto rs = through_device(take, setup_of(chord, g), &msgs);
        CHECK(msgs.has(
            "channel 2 (Alto) carries the same voice as channel 3 (Tenor); it is 20 dB quieter: its microphone hears "
            "the neighbour (crosstalk) or the two share one source"));
        // The best fit leaves the copy out: the soprano, tenor and bass read as without the alto.
        auto without = g;
        without[1].silent = true;
        bool right = true;
        for (const auto& r : rs) {
            if (r.t_s < 1.8 || r.t_s > 2.7) continue;
            for (std::size_t i : {0u, 2u, 3u})
                right = right && std::fabs(r.dev(i, ChordReference::best_fit) -
                                           test::expected_dev(without, i, ChordReference::best_fit)) < 1.0;
        }
        CHECK(right);
    }
}

TEST_CASE("two singers in unison on one voice are not taken for one channel; the best fit counts each") {
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    auto g = quartet();
    g.push_back({"Soprano 2", 3, 4, -2.0, 5.1, 22.0, 0.11, false});
    test::GroupTake take;
    take.channels = 5;
    test::render_group(take, chord, kRootHz, g);
    Messages msgs;
    const auto rs = through_device(take, setup_of(chord, g), &msgs);
    CHECK(msgs.lines.empty());
    check_within(score(rs, g, 1.0, 2.7), g, 1.0);
}

TEST_CASE("a player assigned another voice than they sing: another note, and near_voice names the voice they sit on") {
    // The alto sings 3/2 but the setup gives them 5/4: 3/2 over 5/4 is 6/5,
    // 315.6 cents (1200 log2 1.2), far beyond the 80-cent off-voice limit.
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    const auto g = quartet();
    test::GroupTake take;
    test::render_group(take, chord, kRootHz, g);
    audio::EnsembleSetup s = setup_of(chord, g);
    REQUIRE(s.players[1].voice == 2);
    s.players[1].voice = 1;
    const auto rs = through_device(take, s);
    std::size_t held = 0, named = 0, others_sound = 0;
    for (const auto& r : rs) {
        if (r.t_s < 1.0 || r.t_s > 2.5) continue;
        ++held;
        if (r.p[1].state == pitch::PlayerState::off_voice && r.p[1].near_voice == 2) ++named;
        if (r.p[0].state == pitch::PlayerState::sounding && r.p[2].state == pitch::PlayerState::sounding &&
            r.p[3].state == pitch::PlayerState::sounding)
            ++others_sound;
        CHECK(r.p[0].near_voice == -1);  // only a player on another note is given one
    }
    REQUIRE(held > 200);
    CHECK(static_cast<double>(named) / static_cast<double>(held) > 0.95);
    CHECK(static_cast<double>(others_sound) / static_cast<double>(held) > 0.95);
}

TEST_CASE(
    "ensemble beats come from the audible-pair rule: own pairs within hearing, none above the 16th partial or 4 kHz") {
    // Rates by |p f_a - q f_b| (Helmholtz, On the Sensations of Tone, ch. VIII);
    // the limits (16th partial, 4 kHz) are those stated in pitch/theory/beats.h (common practice).
    for (const char* text : {"4:5:6:7", "8:15", "8:17", "2:3:19"}) {
        CAPTURE(text);
        const pitch::Chord chord = pitch::parse_chord(text);
        std::vector<pitch::Player> players;
        for (std::size_t v = 0; v < chord.size(); ++v)
            players.push_back({"p" + std::to_string(v), v, static_cast<int>(v)});
        pitch::EnsembleConfig cfg;
        cfg.root_hz = kRootHz;
        pitch::EnsembleAnalyzer an(chord, players, cfg);
        std::vector<pitch::PitchFrame> frames(players.size());
        pitch::EnsembleReading r;
        for (int k = 0; k < 400; ++k) {
            for (std::size_t v = 0; v < players.size(); ++v) {
                frames[v].t_s = k * cfg.hop_s;
                frames[v].f0_hz = kRootHz * std::exp2((chord.voice_cents(v) + (v == 0 ? 0.0 : 3.0)) /
                                                      1200.0);  // upper voices 3 c sharp
                frames[v].confidence = 0.99;
                frames[v].level_dbfs = -20.0;
            }
            r = an.process(frames, k * 240);
        }
        for (std::size_t a = 0; a < players.size(); ++a)
            for (std::size_t b = a + 1; b < players.size(); ++b) {
                CAPTURE(a);
                CAPTURE(b);
                const pitch::PairBeat& pb = r.pair(a, b);
                if (pb.partial_a < 0) continue;
                const double fa = kRootHz * std::exp2(chord.voice_cents(a) / 1200.0),
                             fb = kRootHz * std::exp2(chord.voice_cents(b) / 1200.0);
                CHECK(pb.partial_a <= 16);
                CHECK(pb.partial_b <= 16);
                CHECK(pb.partial_a * fa <= 4000.0);
                // The two partials meet within 100 cents (the rule's limit) in the just chord.
                CHECK(std::fabs(1200.0 * std::log2(pb.partial_a * fa / (pb.partial_b * fb))) <= 100.0);
                if (std::isfinite(pb.beat_hz))
                    CHECK(pb.beat_hz == doctest::Approx(std::fabs(pb.partial_a * r.p[a].centre_f0_hz -
                                                                  pb.partial_b * r.p[b].centre_f0_hz))
                                            .epsilon(1e-9));
            }
        if (std::string(text) == "8:15")
            CHECK(r.pair(0, 1).partial_a == 15);  // its own pair: 15 x 98 Hz = 1470 Hz, in hearing
        if (std::string(text) == "8:17") CHECK(r.pair(0, 1).partial_a != 17);  // 17th partial: beyond the 16th
    }
}
