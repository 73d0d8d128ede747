// Hold scoring: time to lock, mean and spread while held, share in tolerance.
//
// Sources: every expected value is worked by hand from the definitions in
// ui/session/drill_score.h (the arithmetic is written out beside each check) and
// re-computed with numpy (/usr/bin/python3: numpy.mean, numpy.std with
// ddof=0, numpy.argmax over the in-band mask) as an independent check.
#include "pitch/base/error.h"
#include "ui/session/drill_score.h"

#include <doctest/doctest.h>

#include <cmath>
#include <vector>

using namespace beatless::pitch;
using namespace beatless::ui;

namespace {

constexpr double kPi = 3.14159265358979323846;

HoldScoreConfig tenth_hop() {
    HoldScoreConfig c;
    c.tolerance_cents = 10.0;
    c.dwell_s = 0.3;
    c.hop_s = 0.1;
    c.bridge_s = 0.05;
    c.hold_start_s = 0.0;
    c.hold_dur_s = 2.0;
    return c;
}

std::vector<HoldPoint> points_every(double hop_s, const std::vector<double>& devs, double t0 = 0.0) {
    std::vector<HoldPoint> p;
    for (std::size_t i = 0; i < devs.size(); ++i)
        p.push_back({t0 + hop_s * static_cast<double>(i), devs[i], !std::isnan(devs[i])});
    return p;
}

// n voiced readings at a 5 ms hop; `path` sets the deviations from r.t_s.
template <class F>
std::vector<Reading> scripted(int n, F path) {
    std::vector<Reading> out;
    for (int i = 0; i < n; ++i) {
        Reading r;
        r.t_s = 0.005 * i;
        r.f0_hz = 220.0;
        path(r);
        out.push_back(r);
    }
    return out;
}

}  // namespace

TEST_CASE("hand-worked hold: a false start, then a lock, a drift out and back") {
    // t = 0.0 .. 1.9 s every 0.1 s; NaN is an unvoiced reading.
    const std::vector<double> devs = {40, 30, 20, 8, 12, 9, 6, 3, 2, -2, 4, -4, 2, -2, NAN, 0, 0, 15, 0, 0};
    const HoldScore s = score_hold(points_every(0.1, devs), tenth_hop());
    // 0.3 s is in the band but 0.4 s (12 c) breaks the run before it covers
    // 0.3 s; the run from 0.5 s covers 0.5..0.8 s by the end of the 0.7 s
    // point's span: lock at 0.5 s.
    CHECK(s.locked);
    CHECK(s.time_to_lock_s == doctest::Approx(0.5).epsilon(1e-9));
    CHECK(s.held_s == doctest::Approx(1.5).epsilon(1e-9));
    // Held voiced points: 9 6 3 2 -2 4 -4 2 -2 0 0 15 0 0 (14 points, equal weight):
    // mean = 33/14 = 2.357143; E[x^2] = 399/14 = 28.5; sd = sqrt(28.5 - 2.357143^2) = 4.789977.
    CHECK(s.mean_dev_cents == doctest::Approx(33.0 / 14.0).epsilon(1e-9));
    CHECK(s.spread_cents == doctest::Approx(4.78997677979971).epsilon(1e-9));
    // Voiced in the window: 19 of 20; in the band: 0.3, 0.5..1.3, 1.5, 1.6, 1.8, 1.9 = 14.
    CHECK(s.in_tolerance_share == doctest::Approx(14.0 / 19.0).epsilon(1e-9));
    CHECK(s.voiced_share == doctest::Approx(0.95).epsilon(1e-9));
    CHECK(s.points_used == 20);
}

TEST_CASE("scripted attempt: a glide into the band, then vibrato inside it") {
    // 5 s at a 5 ms hop: dev = 45 (1 - t) while t < 1 s, then a 5 Hz vibrato
    // of +/-6 cents around the target. The glide reaches 10 c at t = 7/9 s =
    // 0.7778 s, so the first reading in the band is t = 0.780 s (index 156)
    // and it never leaves: lock at 0.78 s. Held: the glide's last 44 points
    // (sum 45 * (44*0.22 - 0.005*946) = 222.75) and 20 whole vibrato cycles
    // (sum 0): mean = 222.75 / 844 = 0.263922 c; numpy std = 4.330547 c.
    const std::vector<Reading> readings = scripted(1000, [](Reading& r) {
        r.dev_cents = r.t_s < 1.0 ? 45.0 * (1.0 - r.t_s) : 6.0 * std::sin(2.0 * kPi * 5.0 * r.t_s);
    });
    HoldScoreConfig c;
    c.hold_dur_s = 5.0;
    const HoldScore s = score_hold(hold_points(readings, DeviationSource::instant), c);
    CHECK(s.locked);
    CHECK(s.time_to_lock_s == doctest::Approx(0.78).epsilon(1e-9));
    CHECK(s.mean_dev_cents == doctest::Approx(222.75 / 844.0).epsilon(1e-6));
    CHECK(s.spread_cents == doctest::Approx(4.330546695132039).epsilon(1e-6));
    CHECK(s.in_tolerance_share == doctest::Approx(0.844).epsilon(1e-9));
    CHECK(s.voiced_share == doctest::Approx(1.0).epsilon(1e-9));
}

TEST_CASE("the vibrato centre is scored when asked for, the instant pitch otherwise") {
    // A wide vibrato (+/-14 c) around a centre 2 c sharp: the instant pitch
    // leaves a 10 c band every cycle, the centre never does.
    std::vector<Reading> readings = scripted(800, [](Reading& r) {
        r.centre_dev_cents = 2.0;
        r.dev_cents = 2.0 + 14.0 * std::sin(2.0 * kPi * 5.5 * r.t_s);
    });
    HoldScoreConfig c;
    c.dwell_s = 0.3;  // longer than the time a 5.5 Hz cycle spends inside the band
    const HoldScore centre = score_hold(hold_points(readings, DeviationSource::centre_first), c);
    CHECK(centre.locked);
    CHECK(centre.time_to_lock_s == doctest::Approx(0.0));
    CHECK(centre.mean_dev_cents == doctest::Approx(2.0));
    CHECK(centre.spread_cents == doctest::Approx(0.0).epsilon(1e-12));
    const HoldScore instant = score_hold(hold_points(readings, DeviationSource::instant), c);
    CHECK_FALSE(instant.locked);
    CHECK(instant.in_tolerance_share < 0.7);
    // A missing centre (NaN) falls back to the instant deviation.
    readings[0].centre_dev_cents = NAN;
    CHECK(hold_points(readings, DeviationSource::centre_first)[0].dev_cents == readings[0].dev_cents);
}

TEST_CASE("no lock: in-band runs shorter than the dwell; mean and spread over the whole hold") {
    // 8, 12, 8, 12 ... every 0.1 s: each in-band run lasts 0.1 s < 0.3 s.
    std::vector<double> devs;
    for (int i = 0; i < 20; ++i) devs.push_back(i % 2 == 0 ? 8.0 : 12.0);
    const HoldScore s = score_hold(points_every(0.1, devs), tenth_hop());
    CHECK_FALSE(s.locked);
    CHECK(std::isnan(s.time_to_lock_s));
    CHECK(s.held_s == 0.0);
    CHECK(s.mean_dev_cents == doctest::Approx(10.0));  // (8 + 12) / 2
    CHECK(s.spread_cents == doctest::Approx(2.0));     // population sd of {8, 12}
    CHECK(s.in_tolerance_share == doctest::Approx(0.5));
}

TEST_CASE("unvoiced gaps: bridged up to bridge_s, a longer gap restarts the run") {
    HoldScoreConfig c;
    c.hop_s = 0.01;
    c.dwell_s = 0.2;
    c.bridge_s = 0.05;
    c.hold_dur_s = 1.0;
    // In band 0.00..0.09, unvoiced 0.10..0.13 (gap 0.14 - 0.10 = 0.04 s), in band after.
    std::vector<double> short_gap(100, 1.0);
    for (int i = 10; i < 14; ++i) short_gap[i] = NAN;
    const HoldScore a = score_hold(points_every(0.01, short_gap), c);
    CHECK(a.locked);
    CHECK(a.time_to_lock_s == doctest::Approx(0.0));
    CHECK(a.voiced_share == doctest::Approx(0.96));
    // Unvoiced 0.10..0.15: the gap to 0.16 is 0.06 s > 0.05 s, so the run
    // restarts at 0.16 s and locks there once it covers 0.2 s.
    std::vector<double> long_gap(100, 1.0);
    for (int i = 10; i < 16; ++i) long_gap[i] = NAN;
    const HoldScore b = score_hold(points_every(0.01, long_gap), c);
    CHECK(b.locked);
    CHECK(b.time_to_lock_s == doctest::Approx(0.16));
    // Missing readings (no point at all) count like unvoiced ones.
    std::vector<HoldPoint> sparse = points_every(0.01, std::vector<double>(100, 1.0));
    sparse.erase(sparse.begin() + 10, sparse.begin() + 16);
    CHECK(score_hold(sparse, c).time_to_lock_s == doctest::Approx(0.16));
}

TEST_CASE("a run cut short by the end of the hold does not lock") {
    HoldScoreConfig c = tenth_hop();
    c.hold_dur_s = 1.0;
    // In the band only from 0.8 s: 0.8, 0.9 cover 0.2 s < 0.3 s before the window ends.
    const HoldScore s = score_hold(points_every(0.1, {30, 30, 30, 30, 30, 30, 30, 30, 0, 0, 0, 0}), c);
    CHECK_FALSE(s.locked);
    CHECK(s.points_used == 10);  // 1.0 s and 1.1 s lie outside the window
    CHECK(s.in_tolerance_share == doctest::Approx(0.2));
}

TEST_CASE("the hold window: earlier points ignored, lock time measured from the hold's start") {
    HoldScoreConfig c = tenth_hop();
    c.hold_start_s = 3.0;
    c.hold_dur_s = 1.0;
    // t = 2.5 .. 4.4; in band from 2.5 (before the hold) and all along.
    const HoldScore s = score_hold(points_every(0.1, std::vector<double>(20, -4.0), 2.5), c);
    CHECK(s.locked);
    CHECK(s.time_to_lock_s == doctest::Approx(0.0).epsilon(1e-9));
    CHECK(s.points_used == 10);
    CHECK(s.mean_dev_cents == doctest::Approx(-4.0));
}

TEST_CASE("edge of the band counts as in; dwell 0 locks on the first in-band point") {
    HoldScoreConfig c = tenth_hop();
    c.dwell_s = 0.0;
    const HoldScore s = score_hold(points_every(0.1, {25, -10.0, 25}), c);
    CHECK(s.locked);
    CHECK(s.time_to_lock_s == doctest::Approx(0.1));
}

TEST_CASE("empty, all-unvoiced and out-of-order input") {
    const HoldScore e = score_hold({}, HoldScoreConfig{});
    CHECK_FALSE(e.locked);
    CHECK(std::isnan(e.mean_dev_cents));
    CHECK(std::isnan(e.spread_cents));
    CHECK(std::isnan(e.in_tolerance_share));
    CHECK(e.voiced_share == 0.0);
    CHECK(e.points_used == 0);

    const HoldScore u = score_hold(points_every(0.1, {NAN, NAN, NAN}), tenth_hop());
    CHECK_FALSE(u.locked);
    CHECK(std::isnan(u.mean_dev_cents));
    CHECK(u.voiced_share == 0.0);
    CHECK(u.points_used == 3);

    // Reversed order and a NaN time give the same score as the sorted points.
    std::vector<HoldPoint> p =
        points_every(0.1, {40, 30, 20, 8, 12, 9, 6, 3, 2, -2, 4, -4, 2, -2, NAN, 0, 0, 15, 0, 0});
    const HoldScore sorted = score_hold(p, tenth_hop());
    std::vector<HoldPoint> r(p.rbegin(), p.rend());
    r.push_back({NAN, 0.0, true});
    const HoldScore reversed = score_hold(r, tenth_hop());
    CHECK(reversed.time_to_lock_s == doctest::Approx(sorted.time_to_lock_s));
    CHECK(reversed.mean_dev_cents == doctest::Approx(sorted.mean_dev_cents));
    CHECK(reversed.spread_cents == doctest::Approx(sorted.spread_cents));
    CHECK(reversed.points_used == sorted.points_used);
}

TEST_CASE("a bad score configuration names the setting") {
    HoldScoreConfig c;
    c.tolerance_cents = 0.0;
    CHECK_THROWS_WITH_AS(score_hold({}, c), doctest::Contains("tolerance_cents"), beatless::Error);
    c = HoldScoreConfig{};
    c.hop_s = -1.0;
    CHECK_THROWS_WITH_AS(score_hold({}, c), doctest::Contains("hop_s"), beatless::Error);
}
