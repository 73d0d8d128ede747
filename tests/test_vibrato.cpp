// VibratoCentre and the whole-cycle search it rests on.
//
// Sources: the time average of a sinusoid over a whole number of periods is
// zero, so the average of centre + D sin(2 pi r t + phi) over whole cycles is
// the centre (any calculus text, Fourier series of a periodic function).
// Vibrato of 5-7 Hz and tens of cents is the singers' and string players'
// usual range (common practice; from memory, C. E. Seashore, Psychology of
// Music, 1938, reports about 6-7 Hz for singers). Every signal is
// generated here with the centre, rate, depth and phase known exactly.
#include "pitch/base/error.h"
#include "pitch/dsp/vibrato.h"
#include "pitch/dsp/whole_cycles.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <cmath>
#include <random>
#include <vector>

using namespace beatless;
using namespace beatless::pitch;

namespace {
constexpr double kTwoPi = 6.283185307179586476925286766559;

struct Worst {
    double centre_err = 0.0;
    double rate_err = 0.0;
    double depth_err = 0.0;
    int readings = 0;
    int without_vibrato = 0;
};

// Feeds 2.5 s of vibrato at 5 ms and checks every reading after settle_s.
Worst run_vibrato(double centre, double rate, double depth, double phase, double jitter, unsigned seed,
                  double settle_s = 0.65) {
    VibratoCentre vc;
    std::mt19937 rng(seed);
    std::normal_distribution<double> nd(0.0, jitter);
    Worst w;
    for (int k = 0; k < 500; ++k) {
        const double t = 0.3 + 0.005 * k;  // starts at an arbitrary stream time
        const double c = centre + depth * std::sin(kTwoPi * rate * t + phase) + nd(rng);
        const VibratoReading& r = vc.push(t, c, true);
        if (t - 0.3 < settle_s) continue;
        ++w.readings;
        if (!r.vibrato) ++w.without_vibrato;
        w.centre_err = std::max(w.centre_err, std::fabs(r.centre_cents - centre));
        w.rate_err = std::max(w.rate_err, std::fabs(r.rate_hz - rate));
        w.depth_err = std::max(w.depth_err, std::fabs(r.depth_cents - depth));
    }
    return w;
}
}  // namespace

TEST_CASE("vibrato centre within 0.2 cent for 5-7 Hz, +-20..60 cents, any phase") {
    unsigned seed = 1;
    double worst = 0.0;
    for (double rate : {5.0, 5.5, 6.0, 6.5, 7.0}) {
        for (double depth : {20.0, 35.0, 60.0}) {
            for (double phase : {0.0, 1.3, 2.9, 4.4}) {
                const double centre = 582.512 + 3.7 * std::sin(seed * 1.1);  // about 7/5 above a root
                const Worst w = run_vibrato(centre, rate, depth, phase, 0.3, seed++);
                CAPTURE(rate);
                CAPTURE(depth);
                CAPTURE(phase);
                CHECK(w.readings > 300);
                CHECK(w.without_vibrato == 0);
                CHECK(w.centre_err < 0.2);
                CHECK(w.rate_err < 0.1);           // cycles counted over ~0.6 s
                CHECK(w.depth_err < 0.1 * depth);  // half the peak-to-peak swing, sampled every 5 ms
                worst = std::max(worst, w.centre_err);
            }
        }
    }
    MESSAGE("worst centre error " << worst << " cents");
}

TEST_CASE("without vibrato the centre is the plain mean of the last window") {
    VibratoCentre vc;
    std::mt19937 rng(7);
    std::normal_distribution<double> nd(0.0, 0.5);
    VibratoReading r;
    for (int k = 0; k < 300; ++k) r = vc.push(0.005 * k, -13.25 + nd(rng), true);
    CHECK(r.ready);
    CHECK_FALSE(r.vibrato);
    CHECK(r.rate_hz == 0.0);
    // 100 frames of 0.5-cent jitter: the mean's standard error is 0.05 cent.
    CHECK(std::fabs(r.centre_cents + 13.25) < 0.2);
    CHECK(r.spread_cents == doctest::Approx(0.5).epsilon(0.2));
}

TEST_CASE("a plain window mean of a vibrato is off; the whole-cycle mean is not") {
    // 0.6 s of 5.5 Hz vibrato holds 3.3 cycles: the plain mean keeps a
    // part of the last, unfinished cycle's swing: here more than a cent.
    std::vector<double> t, c;
    for (int k = 0; k <= 120; ++k) {
        t.push_back(0.005 * k);
        c.push_back(10.0 + 50.0 * std::sin(kTwoPi * 5.5 * t.back() + 0.4));
    }
    double mean = 0.0, sd = 0.0;
    mean_and_spread(c.data(), c.size(), mean, sd);
    CHECK(std::fabs(mean - 10.0) > 1.0);
    const CycleStats cs = find_cycles(t.data(), c.data(), t.size(), CycleConfig{});
    REQUIRE(cs.found);
    CHECK(cs.cycles == 2);
    CHECK(std::fabs(cs.mean - 10.0) < 0.05);
    CHECK(cs.rate_hz == doctest::Approx(5.5).epsilon(0.01));
    // RMS of a sinusoid of amplitude D is D / sqrt(2) (textbook).
    CHECK(sd == doctest::Approx(50.0 / std::sqrt(2.0)).epsilon(0.05));
}

TEST_CASE("steadiness is the spread over the last second; the centre spread ignores the vibrato") {
    VibratoCentre vc;
    VibratoReading r;
    for (int k = 0; k < 400; ++k) {
        const double t = 0.005 * k;
        r = vc.push(t, 40.0 * std::sin(kTwoPi * 6.0 * t), true);
    }
    REQUIRE(r.vibrato);
    CHECK(r.spread_cents == doctest::Approx(40.0 / std::sqrt(2.0)).epsilon(0.03));
    CHECK(r.centre_spread_cents < 0.1);
    vc.set_target_cents(1.5);
    CHECK(vc.reading().centre_dev_cents == doctest::Approx(-1.5).epsilon(0.1));
}

TEST_CASE("Hz input, gaps and restarts") {
    VibratoConfig cfg;
    cfg.ref_hz = 220.0;
    VibratoCentre vc(cfg);
    // 330 Hz with 6 Hz vibrato of +-30 cents: centre 3/2 above 220 Hz.
    for (int k = 0; k < 300; ++k) {
        const double t = 0.005 * k;
        vc.push_hz(t, 330.0 * std::exp2(30.0 * std::sin(kTwoPi * 6.0 * t) / 1200.0));
    }
    CHECK(vc.reading().vibrato);
    CHECK(std::fabs(1200.0 * std::log2(vc.centre_hz() / 330.0)) < 0.2);
    // One unvoiced frame is bridged...
    vc.push_hz(1.5, 0.0);
    CHECK(vc.reading().ready);
    // ... but a pause longer than max_gap_s starts a new note.
    vc.push_hz(1.6, 0.0);
    CHECK_FALSE(vc.reading().ready);
    vc.push_hz(1.7, 440.0);
    CHECK_FALSE(vc.reading().ready);
    for (int k = 1; k < 40; ++k) vc.push_hz(1.7 + 0.005 * k, 440.0);
    CHECK(vc.reading().ready);
    CHECK(std::fabs(vc.centre_hz() - 440.0) < 1e-6);
    // Non-finite input is unvoiced, never a crash or a NaN centre.
    vc.push_hz(1.9, NAN);
    vc.push(1.905, INFINITY, true);
    CHECK(std::isfinite(vc.reading().centre_cents));
}

TEST_CASE("invalid settings are refused with a message naming the value") {
    VibratoConfig cfg;
    cfg.hop_s = 0.0;
    CHECK_THROWS_AS(VibratoCentre{cfg}, Error);
    cfg = {};
    cfg.min_rate_hz = 8.0;
    cfg.max_rate_hz = 4.0;
    CHECK(testsig::error_of<Error>([&] { VibratoCentre vc(cfg); }).find("min_rate_hz") != std::string::npos);
}

TEST_CASE("dropouts over a vibrato's crests: the whole-cycle mean falls, and dropout_bias says by how much") {
    // A sinusoid's mean over whole cycles is its offset (analytic). A track of m + A sin(2 pi f t) every 10 ms with
    // the frames near each crest missing (a voice fading into a notch at the top of its vibrato): the chord bridge
    // runs under each missing crest and the whole-cycle mean reads low; dropout_bias (the slope-matched cubic minus
    // the chord) must give that shortfall within 15 %.
    const double m = 7.0, a = 44.8, f = 6.49, hop = 0.01;
    for (const double lost : {0.15, 0.25, 0.33}) {  // the share of each cycle missing, centred on the crest
        CAPTURE(lost);
        std::vector<double> t, c, t_all, c_all;
        for (int i = 0; i < 160; ++i) {
            const double ti = 0.013 + hop * i, ph = f * ti - std::floor(f * ti);  // phase in cycles, crest at 0.25
            const double ci = m + a * std::sin(2.0 * M_PI * f * ti);
            t_all.push_back(ti);
            c_all.push_back(ci);
            if (std::fabs(ph - 0.25) > 0.5 * lost) {
                t.push_back(ti);
                c.push_back(ci);
            }
        }
        // Whole cycles: from the first upward crossing of the offset to the eighth after it.
        const double t0 = 1.0 / f, t1 = t0 + 8.0 / f;
        const double chord = interpolated_mean(t.data(), c.data(), t.size(), t0, t1);
        const double bias = dropout_bias(t.data(), c.data(), t.size(), t0, t1, 1.5 * hop);
        CHECK(chord < m - 0.5);  // the crests are lost: it reads flat
        CHECK(std::fabs(bias - (m - chord)) < 0.15 * (m - chord));
        // Without a dropout there is nothing to correct.
        CHECK(dropout_bias(t_all.data(), c_all.data(), t_all.size(), t0, t1, 1.5 * hop) == 0.0);
        CHECK(std::fabs(interpolated_mean(t_all.data(), c_all.data(), t_all.size(), t0, t1) - m) < 0.2);
    }
}
