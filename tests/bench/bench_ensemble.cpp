// beatless-bench section "ensemble": CPU of the multi-channel analysis path.
//
// A generated group (tests/ensemble_signals.h: harmonic voices with vibrato
// and crosstalk) of 4 and 8 players at 48 kHz goes through the capture
// callback (blocks of 256 frames, as a device delivers them) and the whole
// analysis (per player: ring, drone removal when a drone plays, YIN; then
// readings, references, beats, channel checks). Measured as thread CPU time
// per second of audio, the callback and the analysis apart. The bar: 8
// channels in real time using under 15% of one core (analysis + callback).
#include "tests/bench/bench.h"

#include "audio/engine.h"
#include "tests/ensemble_signals.h"

#include <cstdio>

using namespace beatless;

namespace {

std::vector<test::GroupVoice> group_of(std::size_t n) {
    std::vector<test::GroupVoice> g;
    const char* names[] = {"S1", "A1", "T1", "B1", "S2", "A2", "T2", "B2"};
    const std::size_t voices[] = {3, 2, 1, 0, 3, 2, 1, 0};
    for (std::size_t i = 0; i < n; ++i)
        g.push_back({names[i], voices[i], static_cast<int>(i), (static_cast<double>(i % 5) - 2.0) * 3.0,
                     4.8 + 0.15 * static_cast<double>(i), 20.0, 0.1, false});
    return g;
}

void run(bench::Context& ctx) {
    const double rate = 48000.0, root = 98.0;
    const double secs = ctx.quick ? 3.0 : 12.0;
    const pitch::Chord chord = pitch::parse_chord("4:5:6:7");
    std::printf(
        "CPU per second of audio (thread CPU time), 48 kHz, blocks of 256 frames, voices with vibrato and crosstalk\n");
    std::printf("%9s %-22s %14s %12s %14s\n", "channels", "drone", "analysis ms/s", "callback ms/s", "% of a core");
    double worst8 = 0.0;
    for (std::size_t n : {4u, 8u}) {
        for (bool drone : {false, true}) {
            const auto g = group_of(n);
            test::GroupTake take;
            take.rate_hz = rate;
            take.channels = static_cast<int>(n);
            take.dur_s = secs;
            take.end_s = secs - 0.1;
            test::render_group(take, chord, root, g);
            audio::EngineConfig ec;
            ec.sample_rate_hz = rate;
            audio::Engine eng(ec, nullptr);
            audio::EnsembleSetup s;
            s.chord = chord;
            s.players = test::players_of(g);
            s.analysis.root_hz = root;
            eng.set_ensemble(s);
            // The demo's room carries the drone to every microphone; its voices are replaced by the take.
            audio::DemoEnsembleConfig dc;
            dc.level_dbfs = -200.0;
            eng.use_demo(dc);
            audio::DroneSettings d;
            d.on = drone;
            d.root_hz = root;
            d.level_dbfs = -30.0;
            eng.set_drone(d);
            eng.start(false);
            const std::size_t block = 256, ch = n;
            std::vector<pitch::EnsembleReading> got(64);
            double cb_s = 0.0, an_s = 0.0;
            for (std::size_t f = 0; (f + block) * ch <= take.interleaved.size(); f += block) {
                const double t0 = bench::thread_cpu_s();
                eng.capture_block(std::span<const float>(take.interleaved.data() + f * ch, block * ch),
                                  static_cast<int>(n));
                const double t1 = bench::thread_cpu_s();
                eng.analyze_available();
                const double t2 = bench::thread_cpu_s();
                cb_s += t1 - t0;
                an_s += t2 - t1;
                while (eng.take_readings(got) > 0) {}
            }
            const double pct = 100.0 * (an_s + cb_s) / secs;
            if (n == 8) worst8 = std::max(worst8, pct);
            std::printf("%9zu %-22s %14.2f %12.2f %13.2f%%\n", n, drone ? "on (removal per mic)" : "off",
                        1000.0 * an_s / secs, 1000.0 * cb_s / secs, pct);
        }
    }
    std::printf(
        "(with the drone, the callback also renders the drone and each simulated microphone's room, as the demo does;\n"
        " from a device it is the copy alone, as in the drone-off rows)\n");
    std::printf("bar: 8 channels under 15%% of one core; measured %.2f%% (%s)\n\n", worst8,
                worst8 < 15.0 ? "met" : "NOT met");
}

}  // namespace

BEATLESS_BENCH_SECTION("ensemble", "ensemble path: CPU per second of audio for 4 and 8 channels at 48 kHz", run);
