// beatless-bench section "live": the live path on a fake duplex device.
//
// (1) Latency from a pitch step to a settled reading, counted in samples:
//     a voice steps between two notes a just interval apart (the second
//     over f0 from 100 to 440 Hz) over the engine's own drone heard through
//     the simulated room; "settled" = on the new note's target and within
//     1 cent (also 5 cents) of the truth from then on. Blocks of 256 frames,
//     5 ms hop; the tracker's own delay (YinTracker::delay_s) is inside it
//     and printed too, with the same step without the drone (the tracker
//     alone) and the bound the tracker's group delay sets. The bars, for
//     f0 >= 100 Hz: within 5 cents in 25 ms, within 1 cent in 40 ms.
// (2) CPU time of the analysis thread (ring -> drone removal -> YIN ->
//     readings) per second of audio, as thread CPU time, with and without
//     drone removal, and of the callbacks (capture + drone rendering).
//     The bar: under 2% of one core.
// (4) Recording a take: process CPU time (every thread: callbacks, analysis, the take's writer and its FLAC
//     encoder) per second of audio with recording off and on; the bar: recording adds at most 0.5% of one core.
// (3) Drone removal accuracy: voice at 7/5, 10/7, 11/8 under a bright drone
//     6 and 12 dB louder at the microphone; worst |dev - truth| in cents.
#include "tests/bench/bench.h"

#include "audio/drone.h"
#include "audio/take_recorder.h"
#include "tests/live_rig.h"

#include <stdlib.h>
#include <time.h>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>
#include <thread>

using namespace beatless;

namespace {

pitch::TargetSet set_of(std::initializer_list<const char*> ratios) {
    pitch::TargetSet s;
    for (const char* r : ratios) s.targets.push_back({pitch::parse_interval(r), ""});
    return s;
}

audio::DroneSettings drone_at(double root, audio::Timbre t, double level_dbfs) {
    audio::DroneSettings d;
    d.on = true;
    d.root_hz = root;
    d.timbre = t;
    d.level_dbfs = level_dbfs;
    return d;
}

// The span the engine gives one performer live above the short window's floor (30 ms, or what that floor needs).
double live_span_s(double rate) {
    pitch::YinConfig yc;
    yc.sample_rate_hz = rate;
    yc.f_min_hz = audio::kLiveShortFloorHz;
    return std::max(0.030, pitch::YinTracker::min_span_s(yc));
}

// One step 3/2 -> 15/8 over the drone at root = f_new / (15/8), the drone played (and removed) or not.
struct Settled {
    double ms1 = -1.0, ms5 = -1.0;  // settling within 1 and 5 cents, ms after the step (-1: did not settle)
    double delay_s = 0.0;           // the tracker's delay_s()
    int mixed = 0;                  // voiced frames centred after the change reading neither note within 5 c
    int unvoiced = 0;               // ... and unvoiced ones, before the reading settles within 5 c
};

Settled step_over_drone(double rate, std::size_t block, double f_new, bool drone_on) {
    const double root = f_new / (15.0 / 8.0);
    test::LiveRig rig(rate, block);
    const std::vector<test::Step> steps = {{0.3, 1.0, "3/2", 1.5}, {1.0, 1.8, "15/8", -2.5}};
    rig.voice = test::voice_of(steps, root, rate, 1.9, 0.1);
    pitch::ReadingConfig rc;
    rc.root_hz = root;
    const pitch::TargetSet set = set_of({"1/1", "9/8", "5/4", "4/3", "3/2", "5/3", "15/8"});
    audio::DroneSettings d = drone_at(root, audio::Timbre::round, -30.0);
    d.on = drone_on;
    rig.open(rc, set, d, audio::RoomConfig{});
    rig.run();
    Settled out;
    const auto c1 = test::check_step(rig.readings, steps[1], root, rate, set, 1.0);
    const auto c5 = test::check_step(rig.readings, steps[1], root, rate, set, 5.0);
    if (c1.settle_samples >= 0) out.ms1 = 1000.0 * static_cast<double>(c1.settle_samples) / rate;
    if (c5.settle_samples >= 0) out.ms5 = 1000.0 * static_cast<double>(c5.settle_samples) / rate;
    out.delay_s = rig.engine.status().tracker_delay_s;
    // What keeps it past the bound: the frames after the change that still mix both notes.
    const auto onset = static_cast<std::int64_t>(std::ceil(steps[1].start_s * rate));
    const double f_old = root * 1.5 * std::exp2(steps[0].dev_cents / 1200.0),
                 f_new_true = f_new * std::exp2(-2.5 / 1200.0);
    for (const auto& s : rig.readings) {
        if (s.r.t_s < steps[1].start_s || (c5.settle_samples >= 0 && s.captured >= onset + c5.settle_samples)) continue;
        if (!s.r.voiced())
            ++out.unvoiced;
        else if (std::fabs(1200.0 * std::log2(s.r.f0_hz / f_new_true)) > 5.0 &&
                 std::fabs(1200.0 * std::log2(s.r.f0_hz / f_old)) > 5.0)
            ++out.mixed;
    }
    return out;
}

const char* verdict(double ms, double bar_ms) { return ms >= 0.0 && ms <= bar_ms ? "met" : "MISS"; }

void latency(const bench::Context& ctx) {
    // The bars (issue 12, "Faster settling"): for f0 >= 100 Hz a reading within 5 c of the new note within 25 ms of
    // the change, and within 1 c within 40 ms, on the live path with the drone on and removal on.
    constexpr double kBar5_ms = 25.0, kBar1_ms = 40.0;
    std::printf(
        "settling after a step (hop 5 ms, published per block): drone on + removal on; beside it the tracker alone "
        "(drone off)\n");
    std::printf("%8s %6s %7s | %8s %5s %8s %5s | %13s | %8s %8s %8s %9s\n", "rate Hz", "block", "f0 Hz", "5c ms",
                "<=25", "1c ms", "<=40", "alone 5c/1c", "delay ms", "first ms", "bound ms", "mix/unv");
    const double f0s[] = {100.0, 150.0, 220.0, 330.0, 440.0};
    double worst_5c = 0.0, worst_1c = 0.0, worst_excess = 0.0, worst_past_bound = 0.0;
    int worst_mix_100 = 0;
    double worst_delay_s = 0.0;
    int met5 = 0, met1 = 0, runs = 0;
    const struct {
        double rate;
        std::size_t block;
    } setups[] = {{44100.0, 256}, {48000.0, 256}, {48000.0, 128}};
    for (const auto& su : setups) {
        const double rate = su.rate;
        for (double f_new : f0s) {
            if (ctx.quick && f_new != 220.0) continue;
            const Settled on = step_over_drone(rate, su.block, f_new, true);
            const Settled alone = step_over_drone(rate, su.block, f_new, false);
            // What bounds it: YIN needs about two periods of the new note in its window (A. de Cheveigne and
            // H. Kawahara, JASA 111(4), 2002), and the refiner at least its 96-sample window past one period
            // (pitch/dsp/yin.cpp); the first frame on the new note is complete once those have arrived and the
            // tracker's lookahead past its span's end (delay minus half the span) has passed ("first"), and is
            // published at the end of the block holding that sample ("bound"). Frames lie on the hop's grid: the
            // first one whose span holds the two periods may come up to one hop later.
            const double T = rate / f_new;
            const double stretch_s = (T + std::max(T, 96.0) + 16.0) / rate;
            const double first_s = stretch_s + on.delay_s - 0.5 * live_span_s(rate);
            const double blocks = std::ceil((1.0 + first_s) * rate / static_cast<double>(su.block));
            const double bound_ms = 1000.0 * (blocks * static_cast<double>(su.block) / rate - 1.0);
            ++runs;
            met5 += on.ms5 >= 0.0 && on.ms5 <= kBar5_ms;
            met1 += on.ms1 >= 0.0 && on.ms1 <= kBar1_ms;
            worst_5c = std::max(worst_5c, on.ms5 < 0.0 ? 1e3 : on.ms5);
            worst_1c = std::max(worst_1c, on.ms1 < 0.0 ? 1e3 : on.ms1);
            worst_excess = std::max(worst_excess, std::max(on.ms5 - alone.ms5, on.ms1 - alone.ms1));
            worst_past_bound = std::max(worst_past_bound, alone.ms5 - bound_ms);
            char alone_s[32], mix_s[32];
            std::snprintf(alone_s, sizeof alone_s, "%.1f/%.1f", alone.ms5, alone.ms1);
            std::snprintf(mix_s, sizeof mix_s, "%d/%d", on.mixed, on.unvoiced);
            std::printf("%8.0f %6zu %7.1f | %8.1f %5s %8.1f %5s | %13s | %8.1f %8.1f %8.1f %9s\n", rate, su.block,
                        f_new, on.ms5, verdict(on.ms5, kBar5_ms), on.ms1, verdict(on.ms1, kBar1_ms), alone_s,
                        1000.0 * on.delay_s, 1000.0 * first_s, bound_ms, mix_s);
            if (f_new == 100.0) worst_mix_100 = std::max(worst_mix_100, on.mixed + on.unvoiced);
            worst_delay_s = std::max(worst_delay_s, on.delay_s);
        }
    }
    std::printf(
        "bars (f0 >= 100 Hz): 5 c within %.0f ms: met in %d of %d (worst %.1f ms); 1 c within %.0f ms: met in %d "
        "of %d (worst %.1f ms)\n",
        kBar5_ms, met5, runs, worst_5c, kBar1_ms, met1, runs, worst_1c);
    std::printf(
        "drone removal adds at most %.1f ms to the tracker alone; the tracker alone settles (5 c) at most %.1f ms "
        "after the bound\n",
        worst_excess, worst_past_bound);
    // The bound at 100 Hz, the bar's lowest f0: two periods (20 ms) and the tracker's lookahead past its span.
    const double lookahead_ms = 1000.0 * (worst_delay_s - 0.5 * live_span_s(48000.0));
    std::printf(
        "bound: YIN needs about two periods of the new note in its span (de Cheveigne & Kawahara 2002): 20 ms at\n"
        "100 Hz; a frame is complete %.1f ms (the tracker's lookahead) after its span ends, so the first reading on\n"
        "the new note comes %.1f ms after the step at best ('first'), at the end of that block ('bound'), and up to\n"
        "one hop (5 ms) later on the frame grid. At 100 Hz that is over the 25 ms bar: a reading by 25 ms would have\n"
        "at most %.1f ms (%.2f periods) of the new note in its span, fewer on the frame and block grid.\n"
        "'mix/unv' counts the frames centred after the change, before the reading settles, that read neither note\n"
        "within 5 c / are unvoiced (at 100 Hz at most %d).\n"
        "(-1.0: did not settle)\n\n",
        lookahead_ms, 20.0 + lookahead_ms, kBar5_ms - lookahead_ms, (kBar5_ms - lookahead_ms) / 10.0, worst_mix_100);

    // Under the short window's floor (70 Hz): the default (60 Hz) and the settings' lower floors for a low bass voice
    // and double bass, read by the second window with the span they need. No bar; the price of range.
    std::printf(
        "low notes (48 kHz, block 256): under %.0f Hz a second window, its span holding two periods of the floor (at "
        "least 50 ms), reads the note\n",
        audio::kLiveShortFloorHz);
    std::printf("%9s %8s %9s %9s %12s %6s %12s %12s\n", "floor Hz", "span ms", "root Hz", "f0 Hz", "step", "drone",
                "settle 1c ms", "settle 5c ms");
    const pitch::TargetSet set = set_of({"1/1", "9/8", "5/4", "4/3", "3/2", "5/3", "15/8"});
    struct Low {
        double floor_hz, root_hz;
        const char *from, *to;
    };
    // A cello's C string over a G1 drone (C2 = 4/3, then D2 = 3/2); a double
    // bass over E1 (F#1 = 9/8, then G#1 = 5/4).
    for (const Low& lo :
         {Low{audio::kLiveLowestHz, 48.999, "4/3", "3/2"}, Low{audio::kLiveLowestHz, 48.999, "3/2", "4/3"},
          Low{55.0, 48.999, "4/3", "3/2"}, Low{38.0, 41.203, "9/8", "5/4"}})
        for (const bool drone_on : {true, false}) {
            const double rate = 48000.0;
            audio::EngineConfig ec;
            ec.f_min_hz = lo.floor_hz;
            test::LiveRig rig(rate, 256, ec);
            const std::vector<test::Step> steps = {{0.3, 1.0, lo.from, 1.5}, {1.0, 1.8, lo.to, -2.5}};
            rig.voice = test::voice_of(steps, lo.root_hz, rate, 1.9, 0.1);
            pitch::ReadingConfig rc;
            rc.root_hz = lo.root_hz;
            audio::DroneSettings dd = drone_at(lo.root_hz, audio::Timbre::round, -30.0);
            dd.on = drone_on;
            rig.open(rc, set, dd, audio::RoomConfig{});
            rig.run();
            const auto c1 = test::check_step(rig.readings, steps[1], lo.root_hz, rate, set, 1.0);
            const auto c5 = test::check_step(rig.readings, steps[1], lo.root_hz, rate, set, 5.0);
            pitch::YinConfig yc;
            yc.sample_rate_hz = rate;
            yc.f_min_hz = lo.floor_hz;
            const std::string step = std::string(lo.from) + "->" + lo.to;
            std::printf("%9.0f %8.1f %9.1f %9.1f %12s %6s %12.1f %12.1f\n", lo.floor_hz,
                        1000.0 * std::max(0.050, pitch::YinTracker::min_span_s(yc)), lo.root_hz,
                        lo.root_hz * pitch::parse_interval(lo.to).value(), step.c_str(), drone_on ? "on" : "off",
                        1000.0 * static_cast<double>(c1.settle_samples) / rate,
                        1000.0 * static_cast<double>(c5.settle_samples) / rate);
        }
    std::printf("(-0.0: did not settle)\n");
    std::printf("\n");
}

void cpu(const bench::Context& ctx) {
    std::printf("CPU per second of audio (thread CPU time), 48 kHz, block 256, voice with vibrato over a drone\n");
    std::printf("%-34s %14s %12s\n", "path", "ms per s audio", "% of a core");
    const double rate = 48000.0, root = 110.0;
    const double secs = ctx.quick ? 3.0 : 20.0;
    // Variant 3: variant 2 with the short window alone (its floor, 70 Hz): what the second, low-note window costs.
    for (int variant = 0; variant < 4; ++variant) {
        audio::EngineConfig ec;
        ec.drone_removal = variant != 0;
        if (variant == 3) ec.f_min_hz = audio::kLiveShortFloorHz;
        const audio::Timbre timbre = variant >= 2 ? audio::Timbre::bright : audio::Timbre::round;
        test::LiveRig rig(rate, 256, ec);
        std::vector<testsig::Note> notes(1);
        notes[0].start_s = 0.2;
        notes[0].end_s = secs - 0.2;
        notes[0].centre_hz = root * 1.4;
        notes[0].vib_rate_hz = 5.5;
        notes[0].vib_depth_cents = 25.0;
        notes[0].level = 0.1;
        rig.voice.assign(static_cast<std::size_t>(secs * rate), 0.0f);
        testsig::add_voice(rig.voice, rate, notes, testsig::rolloff(12));
        pitch::ReadingConfig rc;
        rc.root_hz = root;
        audio::DroneSettings d = drone_at(root, timbre, -24.0);
        d.fifth = variant >= 2;
        rig.open(rc, set_of({"7/5", "10/7", "11/8", "3/2"}), d, audio::RoomConfig{});
        std::vector<float> in(rig.block), out(2 * rig.block), spk(rig.block, 0.0f);
        double cb_s = 0.0, an_s = 0.0;
        for (std::size_t b = 0; (b + 1) * rig.block <= rig.voice.size(); ++b) {
            std::copy_n(rig.voice.begin() + static_cast<std::ptrdiff_t>(b * rig.block), rig.block, in.begin());
            rig.room->process_add(spk, in);
            double t0 = bench::thread_cpu_s();
            rig.sys.drive(in, out, 1, 2);
            double t1 = bench::thread_cpu_s();
            rig.engine.analyze_available();
            double t2 = bench::thread_cpu_s();
            cb_s += t1 - t0;
            an_s += t2 - t1;
            for (std::size_t i = 0; i < rig.block; ++i) spk[i] = out[2 * i];
        }
        const char* names[] = {"analysis, no drone removal", "analysis + removal (round drone)",
                               "analysis + removal (bright+fifth)", "same, short window alone (70 Hz)"};
        std::printf("%-34s %14.2f %11.2f%%\n", names[variant], 1000.0 * an_s / secs, 100.0 * an_s / secs);
        if (variant == 2)
            std::printf("%-34s %14.2f %11.2f%%\n", "callbacks (capture + drone render)", 1000.0 * cb_s / secs,
                        100.0 * cb_s / secs);
    }
    std::printf("bar: full path under 2%% of one core\n\n");
}

double process_cpu_s() {
    timespec ts{};
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

void recording(const bench::Context& ctx) {
    std::printf(
        "recording a take: process CPU per second of audio (all threads), 48 kHz, block 256, voice over a "
        "drone\n");
    std::printf("%-34s %14s %12s\n", "path", "ms per s audio", "% of a core");
    const double rate = 48000.0, root = 110.0;
    const double secs = ctx.quick ? 5.0 : 30.0;
    double share[2] = {0.0, 0.0};
    for (int on = 0; on < 2; ++on) {
        test::LiveRig rig(rate, 256);
        rig.voice = test::voice_of({{0.2, secs - 0.2, "7/5", 3.0}}, root, rate, secs, 0.1);
        pitch::ReadingConfig rc;
        rc.root_hz = root;
        rig.open(rc, set_of({"7/5", "10/7", "11/8", "3/2"}), drone_at(root, audio::Timbre::round, -24.0),
                 audio::RoomConfig{});
        std::string dir = (std::filesystem::temp_directory_path() / "beatless-bench-XXXXXX").string();
        if (!::mkdtemp(dir.data())) return;
        audio::TakeRecorderConfig tc;
        tc.sample_rate_hz = rate;
        std::unique_ptr<audio::TakeRecorder> rec;
        const double t0 = process_cpu_s();
        if (on) {
            rec = std::make_unique<audio::TakeRecorder>(tc, dir + "/bench.flac", "bench.flac");
            rec->start();
            rig.engine.set_tap(rec.get());
        }
        std::vector<float> in(rig.block), out(2 * rig.block), spk(rig.block, 0.0f);
        for (std::size_t b = 0; (b + 1) * rig.block <= rig.voice.size(); ++b) {
            // Faster than real time: the writer is given the time a device would give it (no frame dropped).
            while (rec && rec->space_frames() < rig.block) std::this_thread::sleep_for(std::chrono::milliseconds(1));
            std::copy_n(rig.voice.begin() + static_cast<std::ptrdiff_t>(b * rig.block), rig.block, in.begin());
            rig.room->process_add(spk, in);
            rig.sys.drive(in, out, 1, 2);
            rig.engine.analyze_available();
            for (std::size_t i = 0; i < rig.block; ++i) spk[i] = out[2 * i];
        }
        if (rec) {
            rig.engine.set_tap(nullptr);
            rec->stop();
        }
        share[on] = (process_cpu_s() - t0) / secs;
        std::filesystem::remove_all(dir);
        std::printf("%-34s %14.2f %11.2f%%\n", on ? "live path, recording" : "live path, not recording",
                    1000.0 * share[on], 100.0 * share[on]);
    }
    std::printf("%-34s %14.2f %11.2f%%\n", "added by recording", 1000.0 * (share[1] - share[0]),
                100.0 * (share[1] - share[0]));
    std::printf("bar: recording adds at most 0.5%% of one core\n\n");
}

void removal(const bench::Context& ctx) {
    std::printf(
        "drone removal: worst |dev - truth| over the steady note (48 kHz, bright drone, room 7 ms / 0.8 / 3 kHz)\n");
    std::printf("%8s %10s %14s %16s\n", "voice", "drone dB", "removal c", "no removal c");
    const double rate = 48000.0, root = 110.0;
    for (double louder_db : {6.0, 12.0}) {
        for (const char* ratio : {"7/5", "10/7", "11/8"}) {
            if (ctx.quick && louder_db > 6.0) continue;
            double worst[2] = {0, 0};
            for (int k = 0; k < 2; ++k) {
                audio::EngineConfig ec;
                ec.drone_removal = k == 0;
                test::LiveRig rig(rate, 256, ec);
                const test::Step st{0.5, 2.5, ratio, 2.2};
                rig.voice = test::voice_of({st}, root, rate, 2.6, 0.1);
                // Level the voice under the drone at the microphone.
                audio::DroneSettings d = drone_at(root, audio::Timbre::bright, -20.0);
                audio::Drone probe(rate);
                probe.set(d);
                audio::SimulatedRoom room(audio::RoomConfig{});
                std::vector<float> spk(static_cast<std::size_t>(rate)), mic(spk.size(), 0.0f);
                probe.render(spk);
                room.process_add(spk, mic);
                double ed = 0, ev = 0;
                for (std::size_t i = spk.size() / 4; i < spk.size(); ++i) ed += double(mic[i]) * mic[i];
                for (std::size_t i = static_cast<std::size_t>(0.6 * rate); i < static_cast<std::size_t>(2.4 * rate);
                     ++i)
                    ev += double(rig.voice[i]) * rig.voice[i];
                const double drone_rms = std::sqrt(ed / (0.75 * rate)), voice_rms = std::sqrt(ev / (1.8 * rate));
                const double scale = drone_rms * std::pow(10.0, -louder_db / 20.0) / voice_rms;
                for (float& v : rig.voice) v = static_cast<float>(v * scale);
                pitch::ReadingConfig rc;
                rc.root_hz = root;
                rig.open(rc, set_of({ratio}), d, audio::RoomConfig{});
                rig.run();
                for (const auto& s : rig.readings) {
                    if (s.r.t_s < 0.8 || s.r.t_s > 2.4) continue;
                    worst[k] = std::max(worst[k], s.r.voiced() ? std::fabs(s.r.dev_cents - st.dev_cents) : 9999.0);
                }
            }
            std::printf("%8s %10.0f %14.3f %16.1f\n", ratio, louder_db, worst[0], worst[1]);
        }
    }
    std::printf("(9999 = a frame reported unvoiced)\n");
}

void run(bench::Context& ctx) {
    latency(ctx);
    cpu(ctx);
    recording(ctx);
    removal(ctx);
}

}  // namespace

BEATLESS_BENCH_SECTION("live",
                       "live path: step latency, CPU of the full analysis and of recording, drone removal accuracy",
                       run);
