// The whole live path on a fake device: a voice steps from one ratio to
// another over the engine's own drone, heard through a simulated room.
//
// References: cents are 1200 log2 (Ellis 1885) computed here; the nearest
// target is the set member closest in cents (checked by brute force here);
// beat rates of the coinciding partials are |q f_high - p f_low| for the
// target p/q (Helmholtz 1863, ch. VIII), computed here from the known voice.
#include "audio/engine.h"
#include "pitch/theory/interval.h"
#include "tests/live_rig.h"
#include "tests/mix_signals.h"
#include "tests/timbre_signals.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <tuple>

using namespace beatless;
using test::check_step;
using test::Step;
using test::StepCheck;
using test::voice_of;

namespace {

pitch::TargetSet tritones() {
    pitch::TargetSet s;
    s.id = "test";
    for (const char* r : {"15/11", "11/8", "7/5", "45/32", "600c", "64/45", "10/7", "16/11"})
        s.targets.push_back({pitch::parse_interval(r), ""});
    return s;
}

// The just major scale's ratios (common practice), as the bench's step cases use.
pitch::TargetSet just_major() {
    pitch::TargetSet s;
    for (const char* r : {"1/1", "9/8", "5/4", "4/3", "3/2", "5/3", "15/8"})
        s.targets.push_back({pitch::parse_interval(r), ""});
    return s;
}

// Opens the rig with readings against `set` over root_hz and the engine's drone at the root, -30 dBFS (or off).
void open_over_root(test::LiveRig& rig, double root_hz, pitch::TargetSet set, bool drone_on) {
    pitch::ReadingConfig rc;
    rc.root_hz = root_hz;
    audio::DroneSettings d;
    d.on = drone_on;
    d.root_hz = root_hz;
    d.level_dbfs = -30.0;
    rig.open(rc, std::move(set), d, audio::RoomConfig{});
}

}  // namespace

TEST_CASE("live path: a voice stepping between ratios over the drone, through a fake duplex device") {
    for (double rate : {44100.0, 48000.0}) {
        CAPTURE(rate);
        test::LiveRig rig(rate, 256);
        const double root = 110.0;
        const std::vector<Step> steps = {{0.3, 1.5, "7/5", 2.0}, {1.5, 3.0, "10/7", -3.0}, {3.0, 4.2, "11/8", 4.5}};
        rig.voice = voice_of(steps, root, rate, 4.4, 0.1);
        open_over_root(rig, root, tritones(), true);
        rig.run();
        REQUIRE(rig.readings.size() > 800);
        if (std::getenv("BEATLESS_DUMP_READINGS"))  // for a person investigating a failure
            for (const auto& x : rig.readings)
                std::printf("%.0f t %.3f f0 %.3f c %.3f tgt %d dev %.3f centre %.3f beat %.3f cap %lld\n", rate,
                            x.r.t_s, x.r.f0_hz, x.r.cents_above_root, x.r.target_index, x.r.dev_cents,
                            x.r.centre_dev_cents, x.r.beat_hz, static_cast<long long>(x.captured));
        for (const Step& st : steps) {
            CAPTURE(st.ratio);
            const StepCheck c = check_step(rig.readings, st, root, rate, tritones(), 1.0);
            REQUIRE(c.readings > 100);
            CHECK(c.targets_right);
            CHECK(c.worst_dev_err <= 0.5);
            // A 0.5 cent error at partial q moves the beat by q f (2^(0.5/1200) - 1).
            const pitch::Ratio r = pitch::parse_interval(st.ratio).ratio();
            CHECK(c.worst_beat_err <= static_cast<double>(r.den) * root * r.value() * (std::exp2(0.5 / 1200.0) - 1.0));
            // Latency counted in samples: from the step to the first reading that stays settled.
            REQUIRE(c.settle_samples > 0);
            MESSAGE(st.ratio << " settled " << c.settle_samples << " samples (" << 1000.0 * c.settle_samples / rate
                             << " ms) after the step");
            CHECK(c.settle_samples < static_cast<std::int64_t>(0.1 * rate));
        }
        const audio::EngineStatus stt = rig.engine.status();
        CHECK(stt.ring_overflow_frames == 0);
        CHECK(stt.captured_frames == static_cast<std::uint64_t>(rig.captured));
        CHECK(stt.readings == rig.readings.size());
        CHECK(stt.drone_removal_active);
    }
}

namespace {

// RMS of what the microphone hears of the drone alone (same drone, same room).
double drone_rms_at_mic(const audio::DroneSettings& d, double rate, const audio::RoomConfig& rc_in) {
    audio::Drone drone(rate);
    drone.set(d);
    audio::RoomConfig rc = rc_in;
    rc.sample_rate_hz = rate;
    audio::SimulatedRoom room(rc);
    std::vector<float> spk(static_cast<std::size_t>(rate)), mic(spk.size(), 0.0f);
    drone.render(spk);
    room.process_add(spk, mic);
    double e = 0.0;
    const std::size_t from = mic.size() / 4;  // after the 50 ms start ramp
    for (std::size_t i = from; i < mic.size(); ++i) e += double(mic[i]) * mic[i];
    return std::sqrt(e / static_cast<double>(mic.size() - from));
}

double rms(const std::vector<float>& x, double from_s, double to_s, double rate) {
    double e = 0.0;
    const auto a = static_cast<std::size_t>(from_s * rate), b = static_cast<std::size_t>(to_s * rate);
    for (std::size_t i = a; i < b; ++i) e += double(x[i]) * x[i];
    return std::sqrt(e / static_cast<double>(b - a));
}

}  // namespace

TEST_CASE("drone removal: the voice at 7/5, 10/7 and 11/8 with the drone 6 dB louder in the room") {
    const double rate = 48000.0, root = 110.0;
    audio::DroneSettings d;
    d.on = true;
    d.root_hz = root;
    d.timbre = audio::Timbre::bright;  // 32 partials: the hardest of our timbres to remove
    d.level_dbfs = -20.0;
    audio::RoomConfig room;  // 7 ms, gain 0.8, 3 kHz low-pass
    const double drone_rms = drone_rms_at_mic(d, rate, room);
    struct Case {
        const char* ratio;
        double dev_cents;
    } cases[] = {{"7/5", 3.3}, {"10/7", -2.6}, {"11/8", 1.7}};
    for (const Case& c : cases) {
        CAPTURE(c.ratio);
        for (bool removal : {true, false}) {
            CAPTURE(removal);
            audio::EngineConfig ec;
            ec.drone_removal = removal;
            test::LiveRig rig(rate, 256, ec);
            const Step st{0.5, 3.0, c.ratio, c.dev_cents};
            rig.voice = voice_of({st}, root, rate, 3.2, 0.1);
            // Voice 6 dB under the drone at the microphone.
            const double scale = 0.5 * drone_rms / rms(rig.voice, 0.6, 2.9, rate);
            for (float& v : rig.voice) v = static_cast<float>(v * scale);
            pitch::ReadingConfig rc;
            rc.root_hz = root;
            pitch::TargetSet set;
            set.targets.push_back({pitch::parse_interval(c.ratio), ""});
            rig.open(rc, set, d, room);
            rig.run();
            int n = 0, within = 0;
            double worst = 0.0;
            for (const auto& s : rig.readings) {
                if (s.r.t_s < st.start_s + 0.3 || s.r.t_s > st.end_s - 0.1) continue;
                ++n;
                const double err = s.r.voiced() ? std::fabs(s.r.dev_cents - c.dev_cents) : 1e9;
                worst = std::max(worst, err);
                if (err <= 1.0) ++within;
            }
            REQUIRE(n > 300);
            MESSAGE(std::string(c.ratio) << std::string(removal ? " with" : " without") << " removal: worst error "
                                         << worst << " cents, " << within << "/" << n << " within 1 cent");
            if (removal) {
                CHECK(worst <= 1.0);
                CHECK(within == n);
            } else {
                // Without removal the plain tracker does not hold the voice:
                // most readings are off by more than a cent (often on the drone).
                CHECK(within < n / 2);
            }
        }
    }
}

TEST_CASE(
    "low instruments: with the lowest note set below the default, the live path tracks a cello's and a double bass's "
    "range") {
    // Cello C string region: B1 = 3/2 above E1 (61.7 Hz); double bass: 5/4
    // above D1 (45.9 Hz). The double bass's lies below the default floor of 60 Hz. Note
    // frequencies: 12-TET from A4 = 440 Hz (ISO 16).
    struct Case {
        double root_hz, lowest_hz;
        const char* ratio;
        double dev_cents;
    };
    for (const Case c : {Case{41.2034, 55.0, "3/2", 2.0}, Case{36.7081, 38.0, "5/4", -3.0}}) {
        CAPTURE(c.lowest_hz);
        pitch::TargetSet set;
        for (const char* r : {"1/1", "5/4", "4/3", "3/2", "2/1"}) set.targets.push_back({pitch::parse_interval(r), ""});
        const Step st{0.3, 2.5, c.ratio, c.dev_cents};
        auto run = [&](double lowest_hz) {
            audio::EngineConfig ec;
            ec.f_min_hz = lowest_hz;
            test::LiveRig rig(48000.0, 256, ec);
            rig.voice = voice_of({st}, c.root_hz, 48000.0, 2.7, 0.1);
            pitch::ReadingConfig rc;
            rc.root_hz = c.root_hz;
            audio::DroneSettings d;  // no drone: the point is the tracker's range
            d.on = false;
            d.root_hz = c.root_hz;
            rig.open(rc, set, d, audio::RoomConfig{});
            rig.run();
            return check_step(rig.readings, st, c.root_hz, 48000.0, set, 1.0);
        };
        const StepCheck low = run(c.lowest_hz);
        REQUIRE(low.readings > 100);
        CHECK(low.targets_right);
        CHECK(low.worst_dev_err <= 0.5);
        // Settling takes longer with the longer span, but stays well under a tenth of a second.
        CHECK(low.settle_samples >= 0);
        CHECK(low.settle_samples <= 48000 / 10);
        // The short window alone (70 Hz, the floor before the second window): the notes are out of its range.
        const StepCheck plain = run(audio::kLiveShortFloorHz);
        CHECK_FALSE(plain.targets_right);
    }
}

// The demo violinist (audio/demo_duo.h): silent between double stops, and every steady frame of the two-voice
// tracker on her sound within 1 c of the interval she plays (her truth). The bound is the bench bar for
// p95 loosened for bow noise; the truth is her own synthesis parameters.
TEST_CASE("demo violinist: double stops the two-voice tracker reads to her truth, silence between them") {
    audio::DemoDuoConfig dc;
    dc.root_hz = 98.0;  // G2: her lower string plays G3
    audio::DemoDuo duo(dc);
    pitch::TargetSet set;
    for (const char* r : {"6/5", "5/4", "4/3", "7/5", "3/2", "5/3", "7/4"})
        set.targets.push_back(pitch::Target{pitch::parse_interval(r), ""});
    std::sort(set.targets.begin(), set.targets.end(),
              [](const pitch::Target& a, const pitch::Target& b) { return a.interval.cents() < b.interval.cents(); });
    pitch::TwoVoiceConfig tc;
    tc.sample_rate_hz = dc.sample_rate_hz;
    pitch::TwoVoiceTracker tv(tc, set);
    const double span_s = 1.25 * static_cast<double>(tv.window_len_samples()) / dc.sample_rate_hz;
    std::vector<float> block(480);
    struct Truth {
        double t, cents;
        bool sounding;
    };
    std::vector<Truth> truth;
    double lift_peak = 0.0;
    int steady = 0, close = 0;
    pitch::TwoVoiceFrame f;
    for (int b = 0; b < 1000; ++b) {  // 10 s
        duo.render(block);
        const audio::DemoDuoTruth tr = duo.truth();
        const double t = (b + 1) * 0.01;
        truth.push_back({t, tr.sounding ? 1200.0 * std::log2(tr.f_high_hz / tr.f_low_hz) : NAN, tr.sounding});
        // In the lift (4.3 .. 4.8 s) after the release ramp: silence.
        if (t > 4.4 && t < 4.8)
            for (float v : block) lift_peak = std::max(lift_peak, static_cast<double>(std::fabs(v)));
        tv.push(block);
        while (tv.pull(f)) {
            // Steady: the whole window inside a double stop, after 2 s of her correction (within 0.2 c by then).
            auto at = [&](double ts) {
                for (const Truth& x : truth)
                    if (x.t >= ts) return x;
                return Truth{ts, NAN, false};
            };
            const double a = f.t_s - 0.5 * span_s, z = f.t_s + 0.5 * span_s;
            const bool in_first = a > 2.3 && z < 4.3;
            const bool in_second = a > 6.8 && z < 8.8;
            if (!(in_first || in_second) || z > t) continue;
            const Truth mid = at(f.t_s);
            ++steady;
            close += f.voices == 2 && std::fabs(f.interval_cents - mid.cents) <= 1.0;
        }
    }
    CHECK(lift_peak < 1e-4);
    REQUIRE(steady > 200);
    CHECK(close >= steady * 95 / 100);
}

// Issue 16's bar through the live path (capture callback, ring, analysis): a double stop whose upper voice is 20 dB
// under the lower steps to a new interval, and the interval is read within 5 c in <= 60 ms (from the step to the
// newest sample of the first of five frames in a row within 5 c; the bench's rule). Truth: the two bowed tones'
// own f0s (tests/timbre_signals.h); the intervals' cents 1200 log2(f_high / f_low) (common practice).
// The last two cases have the geometry of the duo bench's slowest case before the second stage's window could grow to
// 60 ms (83 ms there, with a noise draw these do not reproduce: the bench holds that figure): a fifth to a minor
// sixth, 702 to 814 c, the weak upper voice in a +-10 c vibrato at 5.5 Hz (a string player's, common
// practice), at its crest at the step. With vibrato the truth is the interval averaged over the frame's span.
TEST_CASE("two voices live: the upper voice 20 dB down steps to a new interval, read within 5 c in 60 ms") {
    const double fs = 48000.0, step_s = 1.0, dur_s = 1.6;
    pitch::TargetSet set;
    for (const char* r : {"6/5", "5/4", "4/3", "7/5", "3/2", "8/5", "5/3", "7/4"})
        set.targets.push_back(pitch::Target{pitch::parse_interval(r), ""});
    std::sort(set.targets.begin(), set.targets.end(),
              [](const pitch::Target& a, const pitch::Target& b) { return a.interval.cents() < b.interval.cents(); });
    for (const auto& [f_low, before, after, vib_cents, seed] : {std::tuple{196.0, 1.5, 1.2, 0.0, 13},
                                                                {220.0, 1.25, 1.75, 0.0, 13},
                                                                {174.6, 1.5, 1.4, 0.0, 13},
                                                                {233.1, 1.6, 4.0 / 3.0, 0.0, 13},
                                                                {211.0, 1.5, 1.6, 10.0, 13},
                                                                {211.0, 1.5, 1.6, 10.0, 14}}) {
        CAPTURE(f_low);
        CAPTURE(after);
        CAPTURE(vib_cents);
        const auto f_high = [&](double t) {
            return f_low * (t >= step_s ? after : before) *
                   std::exp2(vib_cents * std::cos(2.0 * M_PI * 5.5 * (t - step_s)) / 1200.0);
        };
        const auto len = static_cast<std::size_t>(dur_s * fs);
        auto x = test::bowed_tone(
            fs, len, [&](double) { return f_low; }, 0.12, 0.5, 11);
        const auto hi = test::bowed_tone(fs, len, f_high, 0.1, 0.5, 12);
        double p = 0.0;
        for (std::size_t i = 0; i < len; ++i) {
            x[i] = 0.6f * (x[i] + 0.1f * hi[i]);
            p += static_cast<double>(x[i]) * x[i];
        }
        test::add_noise(x, test::coloured_noise(test::NoiseColour::white, fs, len, seed), p / static_cast<double>(len),
                        20.0);
        audio::EngineConfig ec;
        ec.sample_rate_hz = fs;
        audio::Engine engine(ec, nullptr);
        engine.set_two_voices(pitch::TwoVoiceConfig{}, set);
        audio::DemoDuoConfig dc;
        dc.level_dbfs = -200.0;  // the demo violinist silent: the fake device's input is the signal
        engine.use_demo(dc);
        engine.start(false);
        std::vector<pitch::TwoVoiceFrame> got(64), frames;
        for (std::size_t i = 0; i + 256 <= len; i += 256) {
            engine.capture_block(std::span<const float>(x.data() + i, 256));
            engine.analyze_available();
            for (std::size_t k; (k = engine.take_readings(std::span<pitch::TwoVoiceFrame>(got))) > 0;)
                frames.insert(frames.end(), got.begin(), got.begin() + static_cast<std::ptrdiff_t>(k));
        }
        engine.stop();
        // The new interval over the frame's span, as if it had sounded throughout.
        const auto truth = [&](const pitch::TwoVoiceFrame& f) {
            double sum = 0.0;
            for (int k = 0; k < 64; ++k) {
                const double t = f.end_s - f.span_s * (k + 0.5) / 64.0;
                sum += 1200.0 * std::log2(f_high(std::max(t, step_s)) / f_low);
            }
            return sum / 64.0;
        };
        int run = 0;
        double latency = INFINITY;
        for (const pitch::TwoVoiceFrame& f : frames) {
            if (f.end_s <= step_s) continue;
            run = f.voices == 2 && std::fabs(f.interval_cents - truth(f)) <= 5.0 ? run + 1 : 0;
            if (run == 5) {
                latency = f.end_s - 4 * 0.01 - step_s;
                break;
            }
        }
        MESSAGE("new interval read in ", 1000.0 * latency, " ms");
        CHECK(latency <= 0.06);
    }
}

// A drill's double stops (audio/demo_duo.h, script): the violinist plays each scripted interval at its time and is
// silent after the last; and new targets given to the running engine (a drill's next hold) keep the stream's clock:
// frames go on in time order, the newest within the tracker's window of the stream time. The intervals' cents from
// their ratios, 1200 log2(p/q) (common practice); her first 6-16 c off corrected within about a second (her model).
TEST_CASE("two voices: a scripted violinist, and targets changed while running keep the stream's clock") {
    const double c74 = 1200.0 * std::log2(7.0 / 4.0), c75 = 1200.0 * std::log2(7.0 / 5.0);
    audio::DemoDuoConfig vc;
    vc.root_hz = 98.0;
    vc.script = {{0.5, 2.5, c74}, {4.0, 2.5, c75}};
    audio::Engine engine(audio::EngineConfig{}, nullptr);
    pitch::TargetSet a, b;
    a.targets.push_back(pitch::Target{pitch::parse_interval("7/4"), ""});
    b.targets.push_back(pitch::Target{pitch::parse_interval("7/5"), ""});
    engine.set_two_voices(pitch::TwoVoiceConfig{}, a);
    engine.use_demo(vc);
    engine.start(false);
    std::vector<pitch::TwoVoiceFrame> got(256), frames;
    auto run_to = [&](double t_s) {
        while (engine.stream_time_s() < t_s) {
            engine.run_demo_frames(480);
            for (std::size_t k; (k = engine.take_readings(std::span<pitch::TwoVoiceFrame>(got))) > 0;)
                frames.insert(frames.end(), got.begin(), got.begin() + static_cast<std::ptrdiff_t>(k));
        }
    };
    run_to(3.3);
    engine.set_two_voices(pitch::TwoVoiceConfig{}, b);  // between the two double stops, as a drill retargets
    run_to(7.5);
    engine.stop();
    REQUIRE(frames.size() > 500);
    int first = 0, first_close = 0, second = 0, second_close = 0, after = 0, after_quiet = 0;
    for (std::size_t i = 0; i < frames.size(); ++i) {
        const pitch::TwoVoiceFrame& f = frames[i];
        if (i > 0) CHECK(f.t_s >= frames[i - 1].t_s);
        const bool pair = f.voices == 2;
        if (f.t_s > 1.8 && f.t_s < 2.8) ++first, first_close += pair && std::fabs(f.interval_cents - c74) <= 2.0;
        if (f.t_s > 5.3 && f.t_s < 6.3) ++second, second_close += pair && std::fabs(f.interval_cents - c75) <= 2.0;
        if (f.t_s > 6.8) ++after, after_quiet += f.voices == 0;
    }
    CHECK(first > 80);
    CHECK(first_close >= first * 9 / 10);
    CHECK(second > 80);
    CHECK(second_close >= second * 9 / 10);  // read by the tracker given at 3.3 s, on the stream's clock
    CHECK(after > 30);
    CHECK(after_quiet == after);
    CHECK(frames.back().end_s <= engine.stream_time_s() + 1e-9);
    CHECK(frames.back().end_s >= engine.stream_time_s() - 0.1);
}

namespace {

// Readings of one performer live at the default floor, drone off (the point is the tracker's range), for a bowed
// string (tests/timbre_signals.h: Helmholtz-motion partials, Cremer 1984, from memory) following f0 after `lead_s`
// of silence, with white noise at snr_db (none when above 100).
std::vector<test::Stamped> bowed_live(double rate, const test::F0Track& f0, double dur_s, double snr_db) {
    const double lead_s = 0.2;
    const auto lead = static_cast<std::size_t>(lead_s * rate);
    std::vector<float> tone = test::bowed_tone(rate, static_cast<std::size_t>(dur_s * rate), f0, 0.11, 0.5, 7);
    for (float& v : tone) v *= 0.25f;
    if (snr_db < 100.0) {
        double p = 0.0;
        for (float v : tone) p += static_cast<double>(v) * v;
        test::add_noise(tone, test::coloured_noise(test::NoiseColour::white, rate, tone.size(), 11),
                        p / static_cast<double>(tone.size()), snr_db);
    }
    test::LiveRig rig(rate, 256);
    rig.voice.assign(lead, 0.0f);
    rig.voice.insert(rig.voice.end(), tone.begin(), tone.end());
    pitch::TargetSet set;
    for (const char* r : {"1/1", "2/1"}) set.targets.push_back({pitch::parse_interval(r), ""});
    open_over_root(rig, 65.4064, set, false);
    rig.run();
    for (auto& s : rig.readings) s.r.t_s -= lead_s;  // time from the tone's start
    if (std::getenv("BEATLESS_DUMP_READINGS"))
        for (const auto& x : rig.readings)
            std::printf("t %.3f f0 %.4f conf %.2f\n", x.r.t_s, x.r.f0_hz, x.r.confidence);
    return rig.readings;
}

}  // namespace

// C2 and C3 in 12-TET from A4 = 440 Hz (ISO 16): 65.4064 and 130.8128 Hz. Cents: 1200 log2 (Ellis 1885).
TEST_CASE("live default floor: a cello's open C is read to the cent, and C2 -> C3 -> C2 with no octave error") {
    constexpr double kC2 = 65.4064, kC3 = 130.8128;
    auto cents = [](double f, double truth) { return 1200.0 * std::log2(f / truth); };
    for (double rate : {44100.0, 48000.0})
        for (double snr : {200.0, 20.0}) {
            CAPTURE(rate);
            CAPTURE(snr);
            const auto rs = bowed_live(
                rate, [](double) { return kC2; }, 2.0, snr);
            std::vector<double> err;
            std::size_t frames = 0;
            for (const auto& s : rs) {
                if (s.r.t_s < 0.2 || s.r.t_s > 1.9) continue;
                ++frames;
                if (s.r.voiced()) err.push_back(std::fabs(cents(s.r.f0_hz, kC2)));
            }
            REQUIRE(frames > 250);
            CHECK(static_cast<double>(err.size()) >= 0.98 * static_cast<double>(frames));  // voiced
            std::sort(err.begin(), err.end());
            REQUIRE(!err.empty());
            MESSAGE("median ", err[err.size() / 2], " c, p95 ", err[err.size() * 95 / 100], " c, worst ", err.back());
            CHECK(err[err.size() * 95 / 100] <= 1.0);
            if (snr > 100.0) CHECK(err.back() <= 1.0);
        }
    // A change of octave, legato (the phase goes on): C2, C3 from 1 s, C2 again from 2 s.
    for (double rate : {44100.0, 48000.0}) {
        CAPTURE(rate);
        const auto rs = bowed_live(
            rate, [](double t) { return t >= 1.0 && t < 2.0 ? kC3 : kC2; }, 3.0, 200.0);
        int octave_errors = 0, voiced = 0;
        double settled_c3 = -1.0, settled_c2 = -1.0;  // s after the change from which every reading is within 1 c
        for (const auto& s : rs) {
            if (s.r.t_s < 0.1 || s.r.t_s > 2.95 || !s.r.voiced()) continue;
            ++voiced;
            const bool high = s.r.t_s >= 1.0 && s.r.t_s < 2.0;
            const bool near_end = high ? s.r.t_s > 1.95 : s.r.t_s > 2.9;  // the window reaches into the next note
            const double e = cents(s.r.f0_hz, high ? kC3 : kC2);
            // An octave error: a reading nearer the other octave than this note. A frame whose samples straddle the
            // change may read the note before it (its t is the centre of those samples): that is not an octave error
            // within 25 ms of the change.
            const double since = s.r.t_s - (high ? 1.0 : 2.0);
            if (std::fabs(std::fabs(e) - 1200.0) < 100.0 && !(since >= 0.0 && since < 0.025)) {
                ++octave_errors;
                MESSAGE("octave error at t ", s.r.t_s, " s: ", s.r.f0_hz, " Hz");
            }
            double& settled = high ? settled_c3 : settled_c2;
            if (s.r.t_s < (high ? 1.0 : 2.0) || near_end) continue;
            if (std::fabs(e) > 1.0)
                settled = -1.0;
            else if (settled < 0.0)
                settled = since;
        }
        CHECK(voiced > 500);
        CHECK(octave_errors == 0);
        MESSAGE("settled within 1 c: C3 after ", settled_c3, " s, C2 after ", settled_c2, " s");
        CHECK(settled_c3 >= 0.0);
        CHECK(settled_c3 <= 0.1);
        CHECK(settled_c2 >= 0.0);
        CHECK(settled_c2 <= 0.1);
    }
}
// A cello's D2 then C2 as 3/2 and 4/3 over a G1 drone (49.0 Hz, 12-TET from A4 = 440 Hz, ISO 16), the drone played
// and removed: the long window reads C2 to the cent once settled. Drone removal must hold its notches while either
// window hears the note (the short one hears nothing in its range there).
TEST_CASE("live default floor: a cello's C2 over a G1 drone with removal on") {
    const double rate = 48000.0, root = 48.9994;
    test::LiveRig rig(rate, 256);
    const std::vector<Step> steps = {{0.3, 1.0, "3/2", 1.5}, {1.0, 1.8, "4/3", -2.5}};
    rig.voice = voice_of(steps, root, rate, 1.9, 0.1);
    const pitch::TargetSet set = just_major();
    open_over_root(rig, root, set, true);
    rig.run();
    for (const Step& st : steps) {
        CAPTURE(st.ratio);
        const StepCheck c = check_step(rig.readings, st, root, rate, set, 1.0);
        CHECK(c.targets_right);
        CHECK(c.worst_dev_err <= 0.5);
        MESSAGE(st.ratio, " settled within 1 c ", 1000.0 * static_cast<double>(c.settle_samples) / rate,
                " ms after the step");
        CHECK(c.settle_samples >= 0);
        CHECK(c.settle_samples <= static_cast<std::int64_t>(0.15 * rate));
    }
}

// The second window must not slow a step above the short floor: two notes in its 50 ms can read as their common
// period (3/2 -> 15/8 over 117.3 Hz, 176 -> 220 Hz, is periodic at 44 Hz). The same step settles as soon with the
// default floor as with the short window alone (within one block).
TEST_CASE("live default floor: a step between notes above 70 Hz settles as with the short window alone") {
    const double rate = 48000.0;
    for (const double f_new : {100.0, 150.0, 220.0}) {
        CAPTURE(f_new);
        const double root = f_new / (15.0 / 8.0);
        const std::vector<Step> steps = {{0.3, 1.0, "3/2", 1.5}, {1.0, 1.8, "15/8", -2.5}};
        const pitch::TargetSet set = just_major();
        auto settle = [&](double lowest_hz) {
            audio::EngineConfig ec;
            ec.f_min_hz = lowest_hz;
            test::LiveRig rig(rate, 256, ec);
            rig.voice = voice_of(steps, root, rate, 1.9, 0.1);
            open_over_root(rig, root, set, true);
            rig.run();
            return check_step(rig.readings, steps[1], root, rate, set, 1.0).settle_samples;
        };
        const std::int64_t both = settle(0.0), short_only = settle(audio::kLiveShortFloorHz);
        CHECK(short_only >= 0);
        CHECK(both >= 0);
        CHECK(both <= short_only + 256);
    }
}

// A step up to 100 Hz (3/2 -> 15/8 over 53.3 Hz: 80 -> 100 Hz) on the live path, the drone played and removed, and
// off. YIN needs about two periods of the new note in its window (A. de Cheveigné and H. Kawahara, JASA 111(4), 2002),
// 20 ms here, and the tracker reads 6 ms past its 30 ms span and publishes per block: a reading within 5 c of the new
// note by 35 ms after the step is a loose limit (the bench holds the 25 ms bar). On the way no reading may be an
// octave off, or a blend of the two notes: every voiced reading after the step is within 50 c of the old note or the
// new one (cents: 1200 log2, Ellis 1885).
TEST_CASE("live path: a step to 100 Hz reads the new note within 5 c by 35 ms, with no octave error") {
    const double f_new = 100.0, root = f_new / (15.0 / 8.0);
    const std::vector<Step> steps = {{0.3, 1.0, "3/2", 1.5}, {1.0, 1.8, "15/8", -2.5}};
    const double f_old_true = root * 1.5 * std::exp2(1.5 / 1200.0), f_new_true = f_new * std::exp2(-2.5 / 1200.0);
    const pitch::TargetSet set = just_major();
    for (const double rate : {44100.0, 48000.0})
        for (const bool drone_on : {true, false}) {
            CAPTURE(rate);
            CAPTURE(drone_on);
            test::LiveRig rig(rate, 256);
            rig.voice = voice_of(steps, root, rate, 1.9, 0.1);
            open_over_root(rig, root, set, drone_on);
            rig.run();
            const StepCheck c = check_step(rig.readings, steps[1], root, rate, set, 5.0);
            MESSAGE("settled within 5 c ", 1000.0 * static_cast<double>(c.settle_samples) / rate, " ms after the step");
            CHECK(c.settle_samples >= 0);
            CHECK(c.settle_samples <= static_cast<std::int64_t>(0.035 * rate));
            int voiced = 0, octave = 0, blend = 0;
            for (const auto& s : rig.readings) {
                if (s.r.t_s < steps[1].start_s || s.r.t_s > steps[1].end_s - 0.05 || !s.r.voiced()) continue;
                ++voiced;
                const double to_new = 1200.0 * std::log2(s.r.f0_hz / f_new_true);
                const double to_old = 1200.0 * std::log2(s.r.f0_hz / f_old_true);
                if (std::fabs(std::fabs(to_new) - 1200.0) < 100.0 || std::fabs(std::fabs(to_old) - 1200.0) < 100.0)
                    ++octave;
                else if (std::fabs(to_new) > 50.0 && std::fabs(to_old) > 50.0)
                    ++blend;
            }
            CHECK(voiced > 100);
            CHECK(octave == 0);
            CHECK(blend == 0);
        }
}
