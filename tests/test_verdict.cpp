// The verdict model (ui/session/verdict.h): one number per moment, shown the same by
// every element of a screen, that never outlives the sound. Checks follow
// DESIGN.md "One reading, one verdict": silence within 100 ms; the centre
// once known, the instantaneous pitch before; cents by Ellis's definition,
// 1200 log2(f / f_ref) (A. J. Ellis, appendix to Helmholtz, On the
// Sensations of Tone, 1885).
#include "tests/cli.h"
#include "ui/session/app_state.h"
#include "ui/session/verdict.h"

#include <doctest/doctest.h>

#include <cmath>

using namespace beatless;

namespace {

constexpr double kHopS = 0.005;

pitch::Reading voiced(double t_s, double root_hz, double cents_above_root, double target_cents,
                      double centre_dev = NAN) {
    pitch::Reading r;
    r.t_s = t_s;
    r.root_hz = root_hz;
    r.f0_hz = root_hz * std::exp2(cents_above_root / 1200.0);
    r.confidence = 0.97;
    r.cents_above_root = cents_above_root;
    r.ratio = r.f0_hz / root_hz;
    r.target_index = 0;
    r.target_cents = target_cents;
    r.dev_cents = cents_above_root - target_cents;
    r.centre_dev_cents = centre_dev;
    if (std::isfinite(centre_dev)) r.centre_f0_hz = root_hz * std::exp2((target_cents + centre_dev) / 1200.0);
    return r;
}

pitch::Reading unvoiced(double t_s) {
    pitch::Reading r;
    r.t_s = t_s;
    return r;
}

}  // namespace

TEST_CASE(
    "verdict: the instantaneous pitch before a vibrato cycle is known, the centre after; its Hz is the same pitch "
    "(Ellis)") {
    const double root = 146.832, target = 582.512;  // 7/5 above D3
    const ui::Verdict before = ui::verdict_of(voiced(0.0, root, target - 22.0, target));
    CHECK(before.source == ui::VerdictSource::instant);
    CHECK(before.dev_cents == doctest::Approx(-22.0));
    CHECK(1200.0 * std::log2(before.f0_hz / root) == doctest::Approx(target - 22.0).epsilon(1e-9));
    const ui::Verdict after = ui::verdict_of(voiced(0.0, root, target - 22.0, target, 0.4));
    CHECK(after.source == ui::VerdictSource::centre);
    CHECK(after.dev_cents == doctest::Approx(0.4));
    CHECK(after.cents_above_root == doctest::Approx(target + 0.4));
    CHECK(1200.0 * std::log2(after.f0_hz / root) == doctest::Approx(target + 0.4).epsilon(1e-9));
}

TEST_CASE("verdict: silence turns it into 'last' within 100 ms, keeping the last value; sound brings it back") {
    ui::VerdictTracker vt;
    double t = 0.0;
    for (int i = 0; i < 100; ++i, t += kHopS) vt.take(voiced(t, 220.0, 702.0, 701.955));
    REQUIRE(vt.verdict().current());
    const double last = vt.verdict().dev_cents;
    const double stop = t;
    while (vt.verdict().current() && t < stop + 1.0) {
        vt.take(unvoiced(t));
        t += kHopS;
    }
    CHECK(t - stop <= 0.1);
    CHECK(vt.verdict().state == ui::VerdictState::silent);
    CHECK(vt.verdict().known());
    CHECK(vt.verdict().dev_cents == last);  // shown only as "last"
    // One stray unvoiced frame in a held note changes nothing.
    ui::VerdictTracker held;
    t = 0.0;
    for (int i = 0; i < 50; ++i, t += kHopS) held.take(i == 30 ? unvoiced(t) : voiced(t, 220.0, 702.0, 701.955));
    CHECK(held.verdict().current());
    // The voice returns: current again after two sure frames.
    vt.take(voiced(t, 220.0, 690.0, 701.955));
    CHECK_FALSE(vt.verdict().current());
    vt.take(voiced(t + kHopS, 220.0, 690.0, 701.955));
    CHECK(vt.verdict().current());
    CHECK(vt.verdict().dev_cents == doctest::Approx(690.0 - 701.955));
}

TEST_CASE("verdict: no readings arriving (a stalled input) is silence too; low confidence is 'unsure'") {
    ui::VerdictTracker vt;
    for (int i = 0; i < 20; ++i) vt.take(voiced(i * kHopS, 220.0, 386.0, 386.314));
    REQUIRE(vt.verdict().current());
    vt.tick(0.05);
    CHECK(vt.verdict().current());
    vt.tick(0.05);
    CHECK(vt.verdict().state == ui::VerdictState::silent);

    ui::VerdictTracker unsure;
    double t = 0.0;
    for (int i = 0; i < 20; ++i, t += kHopS) unsure.take(voiced(t, 220.0, 386.0, 386.314));
    for (int i = 0; i < 20; ++i, t += kHopS) {
        pitch::Reading r = voiced(t, 220.0, 386.0, 386.314);
        r.confidence = 0.4;
        unsure.take(r);
    }
    CHECK(unsure.verdict().state == ui::VerdictState::uncertain);
}

TEST_CASE("verdict: a lone frame far away (a drone partial at a note's end) is not believed; a held new note is") {
    ui::VerdictTracker vt;
    double t = 0.0;
    for (int i = 0; i < 40; ++i, t += kHopS) vt.take(voiced(t, 146.832, 535.0, 536.951));
    for (int i = 0; i < 3; ++i, t += kHopS)
        vt.take(voiced(t, 146.832, 2400.0, 536.951 + 2400.0));  // the drone's 4th partial, 15 ms
    CHECK(vt.verdict().current());
    CHECK(vt.verdict().cents_above_root == doctest::Approx(535.0));
    for (int i = 0; i < 5; ++i, t += kHopS) vt.take(voiced(t, 146.832, 700.0, 701.955));  // a new note, held 25 ms
    CHECK(vt.verdict().cents_above_root == doctest::Approx(700.0));
}

TEST_CASE(
    "verdict on the Practice screen's state: never current once the input has been unvoiced for 100 ms (demo "
    "performer, 12 s)") {
    test::TempDir dir;
    ui::AppOptions o;
    o.demo = true;
    o.simulated = true;
    o.save_settings = false;
    o.root = "D3";
    o.target_set = "tritones";
    o.drone = true;
    ui::Settings st;
    st.caution_acknowledged = true;
    ui::AppState app(st, dir.file("settings.toml"), o);
    app.start();
    int silent_frames = 0, checked = 0;
    for (int i = 0; i < 12 * 60; ++i) {
        app.update(1.0 / 60.0);
        const ui::TraceStore& tr = app.trace();
        if (tr.size() == 0) continue;
        // How long the input has been unvoiced, from the newest reading back.
        const double now = tr.newest()->t_s;
        double unvoiced_for = 0.0;
        for (std::size_t k = tr.size(); k-- > 0;) {
            if (tr.at(k).voiced()) break;
            unvoiced_for = now - tr.at(k).t_s;
        }
        if (unvoiced_for >= 0.1) {
            ++silent_frames;
            CHECK_FALSE(app.has_current());
        }
        if (app.has_current()) {
            ++checked;
            // The verdict's number, pitch and beat come from one reading.
            const ui::Verdict& v = app.verdict();
            CHECK(v.cents_above_root == doctest::Approx(v.reading.target_cents + v.dev_cents));
        }
    }
    CHECK(silent_frames > 30);  // the demo performer rests between notes
    CHECK(checked > 300);
}

TEST_CASE("verdict: sound without a pitch (a note below the tracker's floor) is 'unpitched', not silence") {
    ui::VerdictTracker vt;
    double t = 0.0;
    for (int i = 0; i < 30; ++i, t += kHopS) {
        pitch::Reading r = unvoiced(t);
        r.level_dbfs = -20.0;  // loud: something sounds, but no pitch in range
        vt.take(r);
    }
    CHECK(vt.verdict().state == ui::VerdictState::unpitched);
    CHECK_FALSE(vt.verdict().known());  // no value to show as "last"
    for (int i = 0; i < 30; ++i, t += kHopS) {
        pitch::Reading r = unvoiced(t);
        r.level_dbfs = -90.0;
        vt.take(r);
    }
    CHECK(vt.verdict().state == ui::VerdictState::idle);  // nothing heard yet: not even "last"
    for (int i = 0; i < 10; ++i, t += kHopS) vt.take(voiced(t, 220.0, 0.0, 0.0));
    for (int i = 0; i < 30; ++i, t += kHopS) {
        pitch::Reading r = unvoiced(t);
        r.level_dbfs = -90.0;
        vt.take(r);
    }
    CHECK(vt.verdict().state == ui::VerdictState::silent);
}
