// beatless-bench section "review": offline review analysis (pitch/ only).
//
// Two voices: speed in x real time (thread CPU) and accuracy over random
// mixtures (interval error, beat-rate error). Root detection: speed and
// error over random drone-plus-voice takes. Vibrato centre: error over
// random vibratos. Note segmentation: speed over tracker-like frames (the
// one-voice `analyze` speed needs the tracker and is measured with it).
// Signals come from tests/mix_signals.h and are made before timing starts.
#include "pitch/dsp/vibrato.h"
#include "pitch/measure/dyad_segment.h"
#include "pitch/measure/root_detect.h"
#include "pitch/measure/segment.h"
#include "pitch/measure/two_voice.h"
#include "tests/bench/bench.h"
#include "tests/mix_signals.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <random>
#include <vector>

using namespace beatless;
using namespace beatless::pitch;
using namespace beatless::testsig;
using beatless::bench::Context;
using beatless::bench::percentile;
using beatless::bench::thread_cpu_s;

namespace {
constexpr double kFs = 44100.0;

TargetSet interval_set() {
    return target_set({"6/5", "5/4", "4/3", "7/5", "10/7", "3/2", "8/5", "5/3", "7/4", "11/8", "7/6", "9/7"});
}

const char* verdict(bool ok) { return ok ? "PASS" : "FAIL"; }

void two_voice(Context& ctx, const TargetSet& set, double noise_rms, const char* label, bool timing) {
    const int cases = ctx.quick ? 12 : 120;
    const double dur_s = 4.0;
    std::mt19937_64 rng(99);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    const double offs[] = {0.0, 3.0, -3.0, 7.0, -7.0, 12.0, -12.0};
    std::vector<double> dev_err, beat_rel, beat_abs;
    double cpu = 0.0, audio_s = 0.0;
    int wrong_frames = 0, frames_total = 0, beat_ok = 0, beat_slow = 0, beat_miss_fast = 0;
    double miss_max_hz = 0.0;  // fastest true beat among those misses
    for (int c = 0; c < cases; ++c) {
        const std::size_t ti =
            static_cast<std::size_t>(u(rng) * static_cast<double>(set.targets.size())) % set.targets.size();
        const Ratio r = set.targets[ti].interval.ratio();
        const double off = offs[c % 7] + (u(rng) - 0.5);       // near the listed offsets, not exactly on them
        const double f_low = 100.0 * std::exp2(2.0 * u(rng));  // 100 .. 400 Hz
        const double f_high = f_low * r.value() * std::exp2(off / 1200.0);
        const double lo = 0.2 * std::pow(10.0, -12.0 * u(rng) / 20.0), hi = 0.2 * std::pow(10.0, -12.0 * u(rng) / 20.0);
        std::vector<float> x(static_cast<std::size_t>(dur_s * kFs), 0.0f);
        add_tone(x, kFs, f_low, 0.0, dur_s, lo, rolloff(12, 0.8 + 0.4 * u(rng)));
        add_tone(x, kFs, f_high, 0.0, dur_s, hi, rolloff(12, 0.8 + 0.4 * u(rng)),
                 {0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 0.2, 0.4, 0.6, 0.8, 1.2, 1.4});
        add_noise(x, noise_rms, 1000 + static_cast<std::uint64_t>(c));
        const double truth_beat = std::fabs(r.den * f_high - r.num * f_low);

        TwoVoiceTracker tv({}, set);
        TwoVoiceFrame f, last;
        const double t0 = thread_cpu_s();
        for (std::size_t i = 0; i < x.size(); i += 2048) {
            tv.push(std::span<const float>(x.data() + i, std::min<std::size_t>(2048, x.size() - i)));
            while (tv.pull(f)) {
                last = f;
                if (f.t_s < 0.3 || f.t_s > dur_s - 0.3) continue;
                ++frames_total;
                if (f.voices != 2 || f.target_index != static_cast<int>(ti)) {
                    ++wrong_frames;
                    continue;
                }
                dev_err.push_back(std::fabs(f.dev_cents - off));
            }
        }
        cpu += thread_cpu_s() - t0;
        audio_s += dur_s;
        const bool slow = truth_beat < 1.0 / TwoVoiceConfig{}.beat_history_s;
        if (std::fabs(last.measured_beat_hz - truth_beat) <= std::max(0.1 * truth_beat, 0.2))
            ++beat_ok;
        else if (!slow) {
            ++beat_miss_fast;
            miss_max_hz = std::max(miss_max_hz, truth_beat);
        }
        if (slow) ++beat_slow;
        if (std::isfinite(last.measured_beat_hz)) {
            beat_abs.push_back(std::fabs(last.measured_beat_hz - truth_beat));
            if (truth_beat > 1.0) beat_rel.push_back(std::fabs(last.measured_beat_hz / truth_beat - 1.0));
        } else {
            beat_abs.push_back(INFINITY);
        }
    }
    const double med = percentile(dev_err, 50), p95 = percentile(dev_err, 95);
    std::printf(
        "two voices, %s: %d mixtures (%.0f s), ratios of 12 just targets, offsets 0/+-3/+-7/+-12 c (+-0.5), f_low "
        "100-400 Hz, 0..-12 dB each\n",
        label, cases, audio_s);
    std::printf(
        "  interval error      median %.4f c   p95 %.4f c   max %.4f c   frames off target or one voice: %d of %d\n",
        med, p95, dev_err.empty() ? NAN : *std::max_element(dev_err.begin(), dev_err.end()), wrong_frames,
        frames_total);
    std::printf("  beat-rate error     median %.3f %%  p95 %.3f %% (beats > 1 Hz)   abs median %.3f Hz  p95 %.3f Hz\n",
                100.0 * percentile(beat_rel, 50), 100.0 * percentile(beat_rel, 95), percentile(beat_abs, 50),
                percentile(beat_abs, 95));
    std::printf(
        "  beat within 10 %% or 0.2 Hz of |q f_high - p f_low|: %d of %d mixtures; %d beat slower than one per\n"
        "                      history (reported as 0 Hz), misses among the faster ones: %d (true beats <= %.2f Hz)\n",
        beat_ok, cases, beat_slow, beat_miss_fast, miss_max_hz);
    if (timing) {
        const double xrt = audio_s / cpu;
        std::printf("  speed               %.1f x real time (%.3f s CPU for %.0f s)   bar >= 50 x: %s\n", xrt, cpu,
                    audio_s, verdict(xrt >= 50.0));
    }
    if (noise_rms < 1e-4)
        std::printf("  bar: median interval error <= 0.5 c on clean mixtures: %s\n", verdict(med <= 0.5));
}

// Both voices with vibrato (5.5 and 6.1 Hz): the per-frame interval swings
// with the two vibratos (and wide ones cross to the neighbouring target), so
// the frame figure is the median over each mixture's frames of (deviation -
// truth), against the centres' interval; the held-interval figure is what
// `analyze --voices 2` reports, the dyad's deviation (DyadSegmenter) against
// the truth.
void two_voice_vibrato(Context& ctx) {
    const TargetSet set = target_set({"6/5", "5/4", "4/3", "7/5", "3/2", "8/5", "5/3", "7/4"});
    const int per_depth = ctx.quick ? 4 : 16;
    std::printf("two voices with vibrato (informative; no bar): %d mixtures per depth, f_low 150-300 Hz\n", per_depth);
    for (double depth : {10.0, 20.0, 40.0, 60.0}) {
        std::vector<double> med, held;
        int lost = 0, total = 0, dyads_missed = 0;
        for (int c = 0; c < per_depth; ++c) {
            const std::size_t ti = static_cast<std::size_t>(c) % set.targets.size();
            const Ratio r = set.targets[ti].interval.ratio();
            const double off = (c % 3 - 1) * 6.0;
            Note a;
            a.start_s = 0.0;
            a.end_s = 4.0;
            a.centre_hz = 150.0 * std::exp2(static_cast<double>(c) / per_depth);
            a.vib_rate_hz = 5.5;
            a.vib_depth_cents = depth;
            a.level = 0.2;
            Note b = a;
            b.centre_hz = a.centre_hz * r.value() * std::exp2(off / 1200.0);
            b.vib_rate_hz = 6.1;
            b.vib_phase = 1.0;
            std::vector<float> x(static_cast<std::size_t>(4.0 * kFs), 0.0f);
            add_voice(x, kFs, {a}, rolloff(12));
            add_voice(x, kFs, {b}, rolloff(12), {0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 0.2, 0.4, 0.6, 0.8, 1.2, 1.4});
            TwoVoiceTracker tv({}, set);
            DyadSegmenter seg({}, set);
            TwoVoiceFrame f;
            DyadResult dyad;
            double held_err = NAN;
            double longest = 0.0;
            auto keep = [&](const DyadResult& r) {
                if (r.end_s - r.start_s <= longest) return;
                longest = r.end_s - r.start_s;
                held_err = r.target_index == static_cast<int>(ti) ? std::fabs(r.dev_cents - off) : NAN;
            };
            std::vector<double> d;
            for (std::size_t i = 0; i < x.size(); i += 4096) {
                tv.push(std::span<const float>(x.data() + i, std::min<std::size_t>(4096, x.size() - i)));
                while (tv.pull(f)) {
                    if (seg.push(f, dyad)) keep(dyad);
                    if (f.t_s < 0.3 || f.t_s > 3.7) continue;
                    ++total;
                    if (f.voices != 2 || f.target_index != static_cast<int>(ti))
                        ++lost;
                    else
                        d.push_back(f.dev_cents - off);
                }
            }
            if (seg.finish(dyad)) keep(dyad);
            if (!d.empty()) med.push_back(std::fabs(percentile(d, 50)));
            // One held interval is sung: the longest dyad found must cover most of it.
            if (std::isfinite(held_err) && longest >= 3.0)
                held.push_back(held_err);
            else
                ++dyads_missed;
        }
        std::printf(
            "  +-%2.0f c vibrato     |median deviation error| per mixture: median %.3f c  max %.3f c   frames lost or "
            "misnamed: %d of %d\n",
            depth, percentile(med, 50), med.empty() ? NAN : *std::max_element(med.begin(), med.end()), lost, total);
        std::printf(
            "                    held interval (as analyze reports it): |error| median %.3f c  max %.3f c   missed or "
            "split: %d of %d\n",
            held.empty() ? NAN : percentile(held, 50), held.empty() ? NAN : *std::max_element(held.begin(), held.end()),
            dyads_missed, per_depth);
    }
}

void root_detection(Context& ctx) {
    const int cases = ctx.quick ? 3 : 20;
    std::mt19937_64 rng(7);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    std::vector<double> err;
    double cpu = 0.0, audio_s = 0.0;
    int missed = 0;
    for (int c = 0; c < cases; ++c) {
        const double root = 55.0 * std::exp2(3.0 * u(rng));
        auto notes = tritone_notes();
        for (auto& [r, d] : notes) d = -15.0 + 30.0 * u(rng);
        const Take take = drone_and_voice(kFs, root, notes, 500 + static_cast<std::uint64_t>(c), root < 150 ? 1 : 0,
                                          1.6, 2e-3, 0.06 + 0.12 * u(rng), 0.25);
        RootDetector rd(RootDetectConfig{});
        const double t0 = thread_cpu_s();
        for (std::size_t i = 0; i < take.samples.size(); i += 4096)
            rd.push(
                std::span<const float>(take.samples.data() + i, std::min<std::size_t>(4096, take.samples.size() - i)));
        const RootEstimate e = rd.estimate();
        cpu += thread_cpu_s() - t0;
        audio_s += take.dur_s;
        if (!e.found()) ++missed;
        err.push_back(std::fabs(1200.0 * std::log2(e.root_hz / root)));
    }
    const double mx = *std::max_element(err.begin(), err.end());
    std::printf("root detection: %d takes (%.0f s), drone 55-440 Hz under a louder voice with vibrato\n", cases,
                audio_s);
    std::printf(
        "  root error          median %.4f c   p95 %.4f c   max %.4f c   not found: %d   bar max <= 0.2 c: %s\n",
        percentile(err, 50), percentile(err, 95), mx, missed, verdict(mx <= 0.2 && missed == 0));
    std::printf("  speed               %.0f x real time\n", audio_s / cpu);
}

void vibrato_centre(Context& ctx) {
    const int cases = ctx.quick ? 50 : 1000;
    std::mt19937_64 rng(3);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    std::normal_distribution<double> nd(0.0, 0.3);
    std::vector<double> err;
    double cpu = 0.0;
    long frames = 0;
    for (int c = 0; c < cases; ++c) {
        const double rate = 5.0 + 2.0 * u(rng), depth = 20.0 + 40.0 * u(rng), phase = 6.283 * u(rng);
        const double centre = 1200.0 * u(rng);
        VibratoCentre vc;
        const double t0 = thread_cpu_s();
        for (int k = 0; k < 400; ++k) {
            const double t = 0.005 * k;
            const VibratoReading& r =
                vc.push(t, centre + depth * std::sin(6.283185307179586 * rate * t + phase) + nd(rng), true);
            if (t >= 0.7) err.push_back(std::fabs(r.centre_cents - centre));
        }
        cpu += thread_cpu_s() - t0;
        frames += 400;
    }
    const double p95 = percentile(err, 95), mx = *std::max_element(err.begin(), err.end());
    std::printf(
        "vibrato centre: %d vibratos, 5-7 Hz, +-20..60 c, any phase, 0.3 c frame jitter, readings from 0.7 s on\n",
        cases);
    std::printf("  centre error        median %.4f c   p95 %.4f c   max %.4f c   bar p95 <= 0.2 c: %s\n",
                percentile(err, 50), p95, mx, verdict(p95 <= 0.2));
    std::printf("  speed               %.2f us per frame\n", 1e6 * cpu / static_cast<double>(frames));
}

void segmentation(Context& ctx) {
    const int takes = ctx.quick ? 5 : 50;
    const TargetSet set = tritone_set();
    std::vector<double> err;
    int missing = 0;
    double cpu = 0.0, audio_s = 0.0;
    for (int c = 0; c < takes; ++c) {
        const double root = 110.0 * std::exp2(c % 12 / 12.0);
        const auto truth = tritone_notes();
        const auto notes = take_notes(root, truth, 40 + static_cast<std::uint64_t>(c));
        const double dur = notes.back().end_s + 0.5;
        const auto frames = frames_of(notes, dur, 0.005, 0.5, 70 + static_cast<std::uint64_t>(c), root);
        SegmentConfig cfg;
        cfg.root_hz = root;
        NoteSegmenter seg(cfg, set);
        std::vector<NoteResult> found;
        NoteResult r;
        const double t0 = thread_cpu_s();
        for (const PitchFrame& f : frames)
            if (seg.push(f, r)) found.push_back(r);
        if (seg.finish(r)) found.push_back(r);
        cpu += thread_cpu_s() - t0;
        audio_s += dur;
        if (found.size() != truth.size()) {
            ++missing;
            continue;
        }
        for (std::size_t i = 0; i < truth.size(); ++i) err.push_back(std::fabs(found[i].dev_cents - truth[i].second));
    }
    const double mx = err.empty() ? NAN : *std::max_element(err.begin(), err.end());
    std::printf("note segmentation (frames made from known f0 paths, 0.5 c jitter): %d takes of 5 tritones\n", takes);
    std::printf(
        "  deviation error     median %.4f c   p95 %.4f c   max %.4f c   takes with notes missed: %d   bar max < 1 c: "
        "%s\n",
        percentile(err, 50), percentile(err, 95), mx, missing, verdict(mx < 1.0 && missing == 0));
    std::printf("  speed               %.0f x real time (segmenter alone; tracker not included)\n", audio_s / cpu);
}

void run(Context& ctx) {
    two_voice(ctx, interval_set(), 1e-5, "clean", true);
    two_voice(ctx, interval_set(), 3e-3, "noise at -50 dBFS", false);
    two_voice_vibrato(ctx);
    root_detection(ctx);
    vibrato_centre(ctx);
    segmentation(ctx);
}
}  // namespace

BEATLESS_BENCH_SECTION("review", "offline review: two voices, root detection, vibrato centre, note segmentation", run);
