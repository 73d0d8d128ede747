// TwoVoiceTracker on mixtures of two harmonic tones with exactly known f0s.
//
// Sources: the bars (interval deviation within 1 cent; measured beat rate
// within 10 % or 0.2 Hz of |q f_high - p f_low|) are the review issue's.
// The beat of the coinciding pair of a ratio p/q mistuned by d cents is
// p * f_low * |2^(d/1200) - 1| (Helmholtz, On the Sensations of Tone, ch.
// VIII); the outside reference for a measured beat is scipy: band-pass,
// Hilbert envelope and the envelope's spectral peak
// (tests/reference/beat_envelope.py, run with /usr/bin/python3).
#include "pitch/base/error.h"
#include "pitch/dsp/cancel_yin.h"
#include "pitch/measure/duo_advice.h"
#include "pitch/measure/two_voice.h"
#include "pitch/theory/beats.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <random>
#include <string>
#include <tuple>
#include <vector>

using namespace beatless;
using namespace beatless::pitch;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;

TargetSet interval_set() {
    return target_set({"6/5", "5/4", "4/3", "7/5", "10/7", "3/2", "8/5", "5/3", "7/4", "11/8"});
}

std::vector<float> mixture(double f_low, double f_high, double lvl_low, double lvl_high, double dur_s,
                           std::uint64_t seed, double noise = 1e-4) {
    std::vector<float> x(static_cast<std::size_t>(dur_s * kFs), 0.0f);
    add_tone(x, kFs, f_low, 0.0, dur_s, lvl_low, rolloff(12),
             {0.1, 0.5, 0.9, 1.3, 1.7, 2.1, 2.5, 2.9, 0.3, 0.7, 1.9, 0.4});
    add_tone(x, kFs, f_high, 0.0, dur_s, lvl_high, rolloff(12),
             {1.0, 0.2, 2.2, 0.4, 1.6, 0.8, 2.0, 1.2, 0.6, 2.4, 2.8, 1.5});
    if (noise > 0.0) add_noise(x, noise, seed);
    return x;
}

std::vector<TwoVoiceFrame> track(const std::vector<float>& x, const TargetSet& set, std::size_t block = 4096,
                                 TwoVoiceConfig cfg = {}) {
    TwoVoiceTracker tv(cfg, set);
    std::vector<TwoVoiceFrame> out;
    TwoVoiceFrame f;
    for (std::size_t i = 0; i < x.size(); i += block) {
        tv.push(std::span<const float>(x.data() + i, std::min(block, x.size() - i)));
        while (tv.pull(f)) out.push_back(f);
    }
    return out;
}

double median(std::vector<double> v) {
    std::sort(v.begin(), v.end());
    return v.empty() ? NAN : v[v.size() / 2];
}
}  // namespace

TEST_CASE("just ratios and +-3, +-7, +-12 cents off, equal and unequal loudness") {
    const TargetSet set = interval_set();
    std::mt19937_64 rng(77);
    std::uniform_real_distribution<double> u(0.0, 1.0);
    int cases = 0;
    double worst_dev = 0.0, worst_beat_rel = 0.0;
    for (std::size_t ti = 0; ti < set.targets.size(); ++ti) {
        const Ratio r = set.targets[ti].interval.ratio();
        int li = static_cast<int>(ti);
        for (double off : {0.0, 3.0, -3.0, 7.0, -7.0, 12.0, -12.0}) {
            const double f_low = 110.0 * std::exp2(1.5 * u(rng));  // 110 .. 311 Hz
            const double f_high = f_low * r.value() * std::exp2(off / 1200.0);
            // Equal loudness, the high voice 10 dB down, the low voice 10 dB down.
            const double lo = li % 3 == 2 ? 0.063 : 0.2, hi = li % 3 == 1 ? 0.063 : 0.2;
            ++li;
            const auto frames = track(mixture(f_low, f_high, lo, hi, 4.5, 10 + cases), set);
            ++cases;
            CAPTURE(r.str());
            CAPTURE(off);
            CAPTURE(f_low);
            CAPTURE(lo);
            CAPTURE(hi);
            std::vector<double> devs;
            int bad_frames = 0;
            for (const TwoVoiceFrame& f : frames) {
                if (f.t_s < 0.3 || f.t_s > 4.2) continue;
                if (f.voices != 2 || f.target_index != static_cast<int>(ti) || std::fabs(f.dev_cents - off) >= 1.0) {
                    ++bad_frames;
                    continue;
                }
                devs.push_back(std::fabs(f.dev_cents - off));
            }
            CHECK(bad_frames == 0);
            REQUIRE(devs.size() > 300);
            CHECK(median(devs) < 0.5);
            worst_dev = std::max(worst_dev, *std::max_element(devs.begin(), devs.end()));
            // The beat once the history is full, against the rate the true f0s give.
            const TwoVoiceFrame& last = frames.back();
            const double truth = std::fabs(r.den * f_high - r.num * f_low);
            CHECK(truth == doctest::Approx(beat_rate_at(f_low, r, off)).epsilon(1e-9));
            CHECK(last.partial_low == r.num);
            CHECK(last.partial_high == r.den);
            CHECK(std::fabs(last.predicted_beat_hz - truth) < std::max(0.02 * truth, 0.02));
            CAPTURE(last.measured_beat_hz);
            CAPTURE(static_cast<int>(last.beat_source));
            CHECK(last.beat_source != BeatSource::none);
            CHECK(std::fabs(last.measured_beat_hz - truth) <= std::max(0.1 * truth, 0.2));
            if (truth > 2.0) worst_beat_rel = std::max(worst_beat_rel, std::fabs(last.measured_beat_hz / truth - 1.0));
        }
    }
    MESSAGE(cases << " mixtures: worst interval error " << worst_dev << " cents, worst beat error "
                  << 100.0 * worst_beat_rel << " % (beats over 2 Hz)");
}

TEST_CASE("measured beat rate agrees with scipy's Hilbert envelope") {
    const double f_low = 200.0, f_high = 250.0 * std::exp2(7.0 / 1200.0);  // 5/4, 7 cents wide
    const auto x = mixture(f_low, f_high, 0.2, 0.15, 5.0, 3);
    const double scipy_hz = run_reference("beat_envelope.py", x, "44100 1002 60");
    REQUIRE(std::isfinite(scipy_hz));
    const auto frames = track(x, interval_set());
    const TwoVoiceFrame& last = frames.back();
    MESSAGE("scipy envelope " << scipy_hz << " Hz, ours " << last.measured_beat_hz << " Hz, predicted "
                              << last.predicted_beat_hz << " Hz");
    CHECK(last.beat_source == BeatSource::envelope);
    CHECK(scipy_hz == doctest::Approx(5.0 * f_low * (std::exp2(7.0 / 1200.0) - 1.0)).epsilon(0.05));
    CHECK(last.measured_beat_hz == doctest::Approx(scipy_hz).epsilon(0.05));
}

TEST_CASE("a deep beat: the coinciding partials equally strong, so the shared peak vanishes at each null") {
    // 4/3, 3 and 7 cents wide: the low voice's 4th partial (level / 4) and the
    // high voice's 3rd (0.75 level / 3) have the same amplitude, and their sum
    // falls to nothing once per beat.
    for (double off : {3.0, 7.0, -5.0}) {
        CAPTURE(off);
        const double f_low = 257.4, f_high = f_low * 4.0 / 3.0 * std::exp2(off / 1200.0);
        const auto frames = track(mixture(f_low, f_high, 0.2, 0.15, 3.2, 8), interval_set());
        const TwoVoiceFrame& last = frames.back();
        const double truth = beat_rate_at(f_low, Ratio{4, 3}, off);
        CAPTURE(last.measured_beat_hz);
        CHECK(last.beat_source == BeatSource::envelope);
        CHECK(std::fabs(last.measured_beat_hz - truth) <= std::max(0.1 * truth, 0.2));
    }
}

TEST_CASE("block size does not change the frames") {
    const auto x = mixture(180.0, 270.0 * std::exp2(4.0 / 1200.0), 0.2, 0.2, 1.0, 5);
    const auto a = track(x, interval_set(), 1);
    const auto b = track(x, interval_set(), 7919);
    REQUIRE(a.size() == b.size());
    REQUIRE(a.size() > 50);
    for (std::size_t i = 0; i < a.size(); ++i) {
        CHECK(a[i].t_s == b[i].t_s);
        CHECK(a[i].f_low_hz == b[i].f_low_hz);
        CHECK(a[i].f_high_hz == b[i].f_high_hz);
    }
    // t marks the centre of the long window whose pair the frame carries (two_voice.h, TwoVoiceFrame::t_s);
    // end_s the newest sample the first frame has seen.
    TwoVoiceTracker tv({}, interval_set());
    const double span = static_cast<double>(tv.window_len_samples()) * 1.25;
    CHECK(a[0].end_s == doctest::Approx((span - 1.0) / kFs));
    CHECK(a[0].t_s == doctest::Approx(0.5 * (span - 1.0) / kFs));
    CHECK(a[1].t_s - a[0].t_s == doctest::Approx(0.01));
}

TEST_CASE("one voice, silence, noise, a clipped mixture, no target set") {
    const TargetSet set = interval_set();
    // One voice.
    std::vector<float> one(static_cast<std::size_t>(1.5 * kFs), 0.0f);
    add_tone(one, kFs, 196.0, 0.0, 1.5, 0.3, rolloff(8));
    for (const TwoVoiceFrame& f : track(one, set)) {
        if (f.t_s < 0.2 || f.t_s > 1.3) continue;
        CHECK(f.voices == 1);
        CHECK(std::fabs(1200.0 * std::log2(f.f_low_hz / 196.0)) < 0.5);
        CHECK(std::isnan(f.interval_cents));
    }
    // Silence.
    const std::vector<float> silence(static_cast<std::size_t>(kFs), 0.0f);
    const auto sf = track(silence, set);
    REQUIRE(!sf.empty());
    for (const TwoVoiceFrame& f : sf) CHECK(f.voices == 0);
    // Noise only: no crash, and nothing it reports is explained well.
    std::vector<float> noise(static_cast<std::size_t>(2 * kFs), 0.0f);
    add_noise(noise, 0.1, 4);
    std::vector<double> conf;
    for (const TwoVoiceFrame& f : track(noise, set)) {
        conf.push_back(f.confidence);
        if (f.voices == 2) CHECK(std::isfinite(f.interval_cents));
    }
    CHECK(median(conf) < 0.5);
    // Clipped at full scale: every frame says so; the intermodulation
    // products clipping adds bias the f0s, so only a loose bound holds.
    auto clipped = mixture(150.0, 225.0 * std::exp2(-5.0 / 1200.0), 1.0, 1.0, 2.0, 6);
    clip(clipped, 1.0f);
    std::vector<double> devs;
    int flagged = 0, frames = 0;
    for (const TwoVoiceFrame& f : track(clipped, set)) {
        ++frames;
        flagged += f.clipped ? 1 : 0;
        if (f.t_s > 0.3 && f.t_s < 1.7 && f.voices == 2) devs.push_back(f.dev_cents);
    }
    CHECK(flagged == frames);
    REQUIRE(devs.size() > 100);
    CHECK(std::fabs(median(devs) + 5.0) < 3.0);
    // No target set: the nearest simple ratio names the interval.
    const auto nf = track(mixture(220.0, 330.0 * std::exp2(5.0 / 1200.0), 0.2, 0.2, 1.0, 7), TargetSet{});
    const TwoVoiceFrame& f = nf.back();
    CHECK(f.target_index == -1);
    CHECK(f.ratio_num == 3);
    CHECK(f.ratio_den == 2);
    CHECK(std::fabs(f.dev_cents - 5.0) < 1.0);
    // Non-finite samples are counted, not propagated.
    TwoVoiceTracker tv({}, set);
    std::vector<float> bad(20000, NAN);
    tv.push(bad);
    CHECK(tv.bad_samples() == bad.size());
    TwoVoiceFrame g;
    while (tv.pull(g)) CHECK(g.voices == 0);
}

TEST_CASE("overflow is counted, never silent; bad settings are refused") {
    TwoVoiceConfig cfg;
    cfg.max_block_len_samples = 4096;
    TwoVoiceTracker tv(cfg, interval_set());
    std::vector<float> big(100000, 0.0f);
    tv.push(big);  // far more than the buffer holds before a pull
    CHECK(tv.dropped_samples() > 0);
    TwoVoiceFrame f;
    int n = 0;
    while (tv.pull(f)) ++n;
    CHECK(n > 0);

    cfg = {};
    cfg.hop_s = 0.0;
    CHECK_THROWS_AS(TwoVoiceTracker(cfg, interval_set()), Error);
    cfg = {};
    cfg.f_min_hz = 20.0;  // fundamentals closer than the window resolves
    CHECK(error_of<Error>([&] { TwoVoiceTracker t(cfg, interval_set()); }).find("f_min_hz") != std::string::npos);
}

// Unisons and octaves (the issue's own rule: say when the two voices cannot be told apart, never print a wrong
// interval). An octave whose upper voice's partials all land on the lower's even partials makes those louder than
// their odd neighbours (common practice: the "hollow to full" change of timbre players hear when an octave joins).
TEST_CASE("a unison and an octave are said as one series and why; a single note is not taken for an octave") {
    const TargetSet set = interval_set();
    const double g = 196.0;
    auto steady = [](const std::vector<TwoVoiceFrame>& fr) {
        std::vector<TwoVoiceFrame> out;
        for (const TwoVoiceFrame& f : fr)
            if (f.t_s > 0.3 && f.t_s < 2.7) out.push_back(f);
        return out;
    };
    SUBCASE("an octave at equal level: the octave read as 2/1, or one series named octave") {
        // Partials 1/h: the lower voice's odd partials show, so the pair is told apart. Partials 1/h^2 (a bowed
        // string, Cremer 1984, from memory): the upper voice hides in the even partials.
        for (const double tilt : {1.0, 2.0}) {
            CAPTURE(tilt);
            std::vector<float> x(static_cast<std::size_t>(3.0 * kFs), 0.0f);
            add_tone(x, kFs, g, 0.0, 3.0, 0.2, rolloff(12, tilt));
            add_tone(x, kFs, 2.0 * g, 0.0, 3.0, 0.2, rolloff(12, tilt), {1.0, 0.2, 2.2, 0.4, 1.6, 0.8, 2.0, 1.2});
            add_noise(x, 1e-4, 3);
            const auto fr = steady(track(x, set));
            REQUIRE(fr.size() > 200);
            int octave = 0, wrong = 0;
            for (const TwoVoiceFrame& f : fr) {
                octave += (f.voices == 1 && f.blend == Blend::octave) ||
                          (f.voices == 2 && std::fabs(f.interval_cents - 1200.0) <= 5.0);
                // Two voices may be claimed only as the octave they are.
                wrong += f.voices == 2 && std::fabs(f.interval_cents - 1200.0) > 5.0;
            }
            CHECK(octave >= static_cast<int>(0.9 * static_cast<double>(fr.size())));
            CHECK(wrong == 0);
        }
    }
    SUBCASE("a unison 1 cent apart: one series, no interval") {
        const auto fr = steady(track(mixture(g, g * std::exp2(1.0 / 1200.0), 0.2, 0.16, 3.0, 4), set));
        REQUIRE(fr.size() > 200);
        int claimed = 0, blended = 0;
        for (const TwoVoiceFrame& f : fr) {
            claimed += f.voices == 2 && std::fabs(f.interval_cents) > 5.0 && std::fabs(f.interval_cents) < 1150.0;
            blended += f.voices == 1 && (f.blend == Blend::one_series || f.blend == Blend::near_unison);
            CHECK(!std::isfinite(f.voices == 1 ? f.dev_cents : NAN));
        }
        CHECK(claimed == 0);
        CHECK(blended >= static_cast<int>(0.95 * static_cast<double>(fr.size())));
    }
    SUBCASE("a single note: one series, not an octave") {
        for (const double f0 : {110.0, 196.0, 440.0, 660.0}) {
            std::vector<float> x(static_cast<std::size_t>(3.0 * kFs), 0.0f);
            add_tone(x, kFs, f0, 0.0, 3.0, 0.2, rolloff(12));
            add_noise(x, 1e-3, 9);
            const auto fr = steady(track(x, set));
            int octave = 0;
            for (const TwoVoiceFrame& f : fr) octave += f.blend == Blend::octave;
            CAPTURE(f0);
            CHECK(octave == 0);
        }
    }
}

TEST_CASE("octave-equivalent matching or not, as chosen") {
    // 7/4 an octave up (7/2, 2168.8 c): in every octave it is 7/4 shifted by one; in the set's own octave only,
    // the nearest listed interval is the widest one (11/8 .. 7/4 all lie below: 7/4 at 968.8 c is nearest).
    const TargetSet set = interval_set();
    const auto x = mixture(130.81, 130.81 * 3.5, 0.2, 0.2, 2.0, 5);
    TwoVoiceConfig exact;
    exact.octave_equivalent = false;
    const auto a = track(x, set), b = track(x, set, 4096, exact);
    const TwoVoiceFrame &fa = a[a.size() / 2], &fb = b[b.size() / 2];
    REQUIRE(fa.voices == 2);
    REQUIRE(fb.voices == 2);
    CHECK(set.targets[static_cast<std::size_t>(fa.target_index)].interval.str() == "7/4");
    CHECK(fa.target_octaves == 1);
    CHECK(std::fabs(fa.dev_cents) < 1.0);
    CHECK(fb.target_octaves == 0);
    CHECK(fb.dev_cents == doctest::Approx(1200.0 * std::log2(3.5) - 1200.0 * std::log2(7.0 / 4.0)).epsilon(1e-3));
}

// Which voice moves (common practice in string and duet teaching: against a drone each note is tuned to the drone;
// without one the lower note is the reference and the upper one is tuned to it). Deviations from exact ratios
// computed here by 1200 log2 (the cent's definition, A. J. Ellis 1885).
TEST_CASE("advise_duo: the voice farther from its own target moves with a drone, the upper one without") {
    const TargetSet set = interval_set();
    const TargetSet with_unison = target_set({"1/1", "6/5", "5/4", "4/3", "3/2", "5/3", "7/4"});
    const double root = 98.0;  // G2
    TwoVoiceFrame f;
    f.voices = 2;
    f.f_low_hz = 196.0 * std::exp2(2.0 / 1200.0);         // the G above: 2 c sharp
    f.f_high_hz = 98.0 * 3.0 * std::exp2(-9.0 / 1200.0);  // D4, 9 c flat of 3/1 over the root
    f.interval_cents = 1200.0 * std::log2(f.f_high_hz / f.f_low_hz);
    f.dev_cents = f.interval_cents - 1200.0 * std::log2(1.5);
    SUBCASE("with a drone") {
        const DuoAdvice a = advise_duo(f, with_unison, root, 5.0);
        CHECK(a.judged);
        CHECK(a.against_root);
        CHECK(a.low.dev_cents == doctest::Approx(2.0).epsilon(1e-6));
        CHECK(a.high.dev_cents == doctest::Approx(-9.0).epsilon(1e-6));
        CHECK(a.mover == DuoMover::high);
        CHECK(a.move_cents == doctest::Approx(9.0).epsilon(1e-6));
        // The lower voice farther off instead: it moves, down.
        TwoVoiceFrame g = f;
        g.f_low_hz = 196.0 * std::exp2(12.0 / 1200.0);
        const DuoAdvice b = advise_duo(g, with_unison, root, 5.0);
        CHECK(b.mover == DuoMover::low);
        CHECK(b.move_cents == doctest::Approx(-12.0).epsilon(1e-6));
        // Both within the width: nothing to move.
        g.f_low_hz = 196.0 * std::exp2(1.0 / 1200.0);
        g.f_high_hz = 294.0 * std::exp2(-3.0 / 1200.0);
        CHECK(advise_duo(g, with_unison, root, 5.0).mover == DuoMover::none);
        CHECK(advise_duo(g, with_unison, root, 5.0).judged);
    }
    SUBCASE("without a drone the lower voice leads") {
        const DuoAdvice a = advise_duo(f, set, 0.0, 5.0);
        CHECK(a.judged);
        CHECK(!a.against_root);
        CHECK(a.mover == DuoMover::high);
        CHECK(a.move_cents == doctest::Approx(11.0).epsilon(1e-6));  // the fifth is 2 + 9 = 11 c narrow
    }
    SUBCASE("one voice or silence: nothing judged") {
        TwoVoiceFrame one;
        one.voices = 1;
        one.f_low_hz = 196.0;
        CHECK(!advise_duo(one, set, root, 5.0).judged);
        CHECK(!advise_duo(TwoVoiceFrame{}, set, 0.0, 5.0).judged);
    }
}

// [SECTION] The second stage: cancellation and a short YIN (pitch/dsp/cancel_yin.h)
// Source: A. de Cheveigné, JASA 93(6), 3271-3290 (1993): the filter y(t) = x(t) - x(t - T) has zeros at every
// multiple of 1/T, so a voice of period T is removed whole and the other voice's period is left (its partials that
// coincide with the first voice's are removed too, which leaves its period unchanged).
TEST_CASE("cancel-YIN: each voice of a double stop with the other cancelled; a lone note cancelled leaves nothing") {
    CancelYinConfig yc;
    yc.sample_rate_hz = kFs;
    CancelYin cy(yc);
    for (const auto& [num, den, off] : {std::tuple{7, 4, 3.0}, {3, 2, 0.0}, {7, 5, 5.0}, {6, 5, -2.0}}) {
        const double f_low = 196.0, f_high = f_low * num / den * std::exp2(off / 1200.0);
        CAPTURE(num);
        CAPTURE(den);
        const auto x = mixture(f_low, f_high, 0.2, 0.1, 0.3, 5);
        const std::size_t end = x.size() - 1000;
        const CancelYinResult hi = cy.estimate(x.data(), end, kFs / f_low, f_low * 1.03, 1200.0);
        const CancelYinResult lo = cy.estimate(x.data(), end, kFs / f_high, 60.0, f_high / 1.03);
        CHECK(std::fabs(1200.0 * std::log2(hi.f0_hz / f_high)) < 0.3);
        CHECK(std::fabs(1200.0 * std::log2(lo.f0_hz / f_low)) < 0.3);
        CHECK(hi.aperiodicity < 0.05);
        CHECK(lo.aperiodicity < 0.05);
        // Without the cancellation the mixture repeats at the pair's common period (f_low / den for a just
        // ratio): YIN names neither voice.
        if (off == 0.0) {
            const CancelYinResult both = cy.estimate(x.data(), end, 0.0, 20.0, 1200.0);
            CHECK(std::fabs(1200.0 * std::log2(both.f0_hz / (f_low / den))) < 1.0);
        }
    }
    // One note, cancelled at its own period: the rest is the noise floor, not a second voice.
    std::vector<float> one(static_cast<std::size_t>(0.3 * kFs), 0.0f);
    add_tone(one, kFs, 220.0, 0.0, 0.3, 0.2, rolloff(12));
    add_noise(one, 1e-4, 3);
    const CancelYinResult rest = cy.estimate(one.data(), one.size() - 1000, kFs / 220.0, 220.0 * 1.03, 1200.0);
    CHECK((rest.f0_hz == 0.0 || rest.aperiodicity > 0.2));
}

// The weak voice of a double stop: a longer window and a low-pass near its partials.
// Sources: cancellation removes the voice of period T1 whole (de Cheveigne, JASA 93(6), 1993), so YIN's difference
// of what is left is zero at the other voice's period T2 (de Cheveigne and Kawahara, JASA 111(4), 2002): for two
// exact harmonic sums the lag found lies within 0.05 samples of T2 (the brief's bound for a sub-sample fit). In white
// noise the variance of a frequency estimate falls as N^-3 with the window's length N (D. C. Rife and R. R.
// Boorstyn, IEEE Trans. Inf. Theory 20(5), 591-598, 1974: the Cramer-Rao bound 12 sigma^2 / (A^2 N (N^2 - 1))),
// so doubling the window cuts the RMS error of an efficient estimator 2.8 times; YIN is not efficient, so only
// 1.4 times is asked. White noise's power falls in proportion to the band kept (common practice): a low-pass at
// 6 f0 instead of 5 kHz keeps under a third of the noise in the band where a 1/h^2 voice has its power.
TEST_CASE("cancel-YIN: the weak voice within 0.05 samples, a longer window and a low-pass near it cut the noise") {
    CancelYinConfig yc;
    yc.sample_rate_hz = kFs;
    yc.max_window_s = 0.04;
    CancelYin cy(yc);
    // The window asked for: from window_s up to max_window_s, in whole 32-sample blocks.
    CHECK(cy.window_len_samples() == cy.window_len_samples(0));
    CHECK(cy.window_len_samples(1) == cy.window_len_samples());
    CHECK(cy.window_len_samples(1000000) >= static_cast<std::size_t>(0.04 * kFs));
    CHECK(cy.window_len_samples(1000000) < static_cast<std::size_t>(0.04 * kFs) + 32);
    CHECK(cy.window_len_samples(1300) <= 1300);
    CHECK(cy.window_len_samples(1300) > 1300 - 32);
    CHECK(cy.window_len_samples(1300) % 32 == 0);
    // Exact sums, the upper voice 20 dB down, periods off the sample grid.
    const double f_low = 187.3;
    const std::size_t w40 = cy.window_len_samples(static_cast<std::size_t>(0.04 * kFs));
    for (const double ratio : {7.0 / 5.0, 1.6 * std::exp2(3.0 / 1200.0), 11.0 / 8.0}) {
        CAPTURE(ratio);
        const double f_high = f_low * ratio;
        std::vector<float> x(static_cast<std::size_t>(0.3 * kFs), 0.0f);
        add_tone(x, kFs, f_low, 0.0, 0.3, 0.3, rolloff(12, 2.0));
        add_tone(x, kFs, f_high, 0.0, 0.3, 0.03, rolloff(12, 2.0), {1.0, 0.2, 2.2, 0.4, 1.6, 0.8});
        const std::size_t end = x.size() - 2000;
        for (const std::size_t w : {std::size_t{0}, w40})
            for (const double lp : {0.0, 6.0 * f_low}) {
                CAPTURE(w);
                CAPTURE(lp);
                const CancelYinResult r = cy.estimate(x.data(), end, kFs / f_low, f_low * 1.03, 1200.0, lp, w);
                REQUIRE(r.f0_hz > 0.0);
                CHECK(std::fabs(kFs / r.f0_hz - kFs / f_high) < 0.05);
            }
    }
    // The same pair in white noise as strong as the weak voice: RMS error over 40 noise draws.
    auto rms_cents = [&](std::size_t w, double lp) {
        double ss = 0.0;
        const double f_high = f_low * 1.6;
        for (int seed = 0; seed < 40; ++seed) {
            std::vector<float> x(static_cast<std::size_t>(0.15 * kFs), 0.0f);
            add_tone(x, kFs, f_low, 0.0, 0.15, 0.3, rolloff(12, 2.0));
            add_tone(x, kFs, f_high, 0.0, 0.15, 0.03, rolloff(12, 2.0));
            add_noise(x, 0.03 / std::sqrt(2.0) * 1.1, 100 + static_cast<std::uint64_t>(seed));
            const CancelYinResult r = cy.estimate(x.data(), x.size() - 2000, kFs / f_low, f_low * 1.03, 1200.0, lp, w);
            const double e = r.f0_hz > 0.0 ? 1200.0 * std::log2(r.f0_hz / f_high) : 100.0;
            ss += e * e;
        }
        return std::sqrt(ss / 40.0);
    };
    const double short_wide = rms_cents(0, 0.0), short_narrow = rms_cents(0, 6.0 * f_low * 1.03);
    const double long_narrow = rms_cents(w40, 6.0 * f_low * 1.03);
    MESSAGE("RMS error, 20 ms at 5 kHz / 20 ms at 6 f0 / 40 ms at 6 f0: ", short_wide, " / ", short_narrow, " / ",
            long_narrow, " c");
    CHECK(short_narrow * 1.5 < short_wide);
    CHECK(long_narrow * 1.4 < short_narrow);
}

// The bar of issue 16: a new interval read within 5 c in <= 60 ms of the change (the frame's newest sample).
TEST_CASE("a new interval is read within 60 ms; the frame's times say which audio it rests on") {
    const TargetSet set = interval_set();
    const double f_low = 196.0, step_s = 1.5;
    for (const auto& [before, after] : {std::pair{1.5, 1.75}, {1.75, 1.2}, {1.4, 1.5}}) {
        CAPTURE(before);
        CAPTURE(after);
        // The low voice goes on unbroken; the high one changes note at step_s (20 ms ramps either side).
        std::vector<float> x(static_cast<std::size_t>((step_s + 1.0) * kFs), 0.0f);
        add_tone(x, kFs, f_low, 0.0, step_s + 1.0, 0.2, rolloff(12));
        add_tone(x, kFs, f_low * before, 0.0, step_s, 0.12, rolloff(12), {1.0, 0.2, 2.2, 0.4, 1.6, 0.8});
        add_tone(x, kFs, f_low * after, step_s, step_s + 1.0, 0.12, rolloff(12), {0.3, 1.2, 2.0, 0.1, 1.1, 2.6});
        add_noise(x, 1e-4, 11);
        const auto frames = track(x, set, 256);
        const double want = 1200.0 * std::log2(after);
        bool all_after = true;
        int seen = 0;
        for (const TwoVoiceFrame& f : frames) {
            CHECK(f.end_s - f.t_s > 0.0);
            if (f.end_s < step_s + 0.06 || f.end_s > step_s + 0.8) continue;
            ++seen;
            all_after = all_after && f.voices == 2 && std::fabs(f.interval_cents - want) <= 5.0;
        }
        CHECK(seen > 50);
        CHECK(all_after);
    }
}

// One value for the measured beat (issue 16): across a bow change (the level dips to a third for 60 ms under a
// burst of noise) every measured beat the tracker reports stays within 0.2 Hz of |q f_high - p f_low| (Helmholtz
// 1863, ch. VIII); frames it cannot measure say so (NaN) instead.
TEST_CASE("across a bow change the measured beat is the pair's or none") {
    const double f_low = 196.0, f_high = f_low * 7.0 / 4.0 * std::exp2(3.0 / 1200.0);
    const double truth = std::fabs(4.0 * f_high - 7.0 * f_low);
    auto x = mixture(f_low, f_high, 0.2, 0.15, 6.0, 21);
    std::mt19937_64 rng(4);
    std::normal_distribution<double> g(0.0, 0.02);
    for (double at_s : {2.0, 4.0})
        for (std::size_t i = static_cast<std::size_t>((at_s - 0.03) * kFs); i < (at_s + 0.03) * kFs; ++i)
            x[i] = static_cast<float>(0.35 * x[i] + g(rng));
    int measured = 0;
    for (const TwoVoiceFrame& f : track(x, interval_set(), 256)) {
        if (!std::isfinite(f.measured_beat_hz) || f.beat_source == BeatSource::slower_than_history) continue;
        ++measured;
        CAPTURE(f.t_s);
        CHECK(std::fabs(f.measured_beat_hz - truth) <= 0.2);
    }
    CHECK(measured > 100);
}
