// Notes, frequencies, beat rates and nearest targets.
//
// Sources: ISO 16:1975 (A4 = 440 Hz); the MIDI 1.0 specification's tuning
// convention (note 69 = A4) with 12-TET spacing 2^(1/12); scientific pitch
// notation (C4 = middle C = MIDI 60, Acoustical Society of America); beat
// rate of coinciding partials |q*f_high - p*f_low| (Helmholtz, On the
// Sensations of Tone, ch. VIII).
#include "pitch/base/error.h"
#include "pitch/measure/reading_maker.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/targets.h"

#include <doctest/doctest.h>

#include <cmath>

using namespace beatless;
using namespace beatless::pitch;

TEST_CASE("A4 = 440 Hz (ISO 16) and MIDI 69 = 440 Hz with 12-TET spacing") {
    CHECK(note_to_hz("A4") == doctest::Approx(440.0).epsilon(1e-12));
    CHECK(midi_to_hz(69) == doctest::Approx(440.0).epsilon(1e-12));
    CHECK(note_to_midi("A4") == 69);
    CHECK(note_to_midi("C4") == 60);   // middle C
    CHECK(note_to_midi("C-1") == 0);   // MIDI note 0
    CHECK(note_to_midi("G9") == 127);  // MIDI note 127
    // Middle C in 12-TET from A4 = 440: 261.6256 Hz (published frequency tables).
    CHECK(note_to_hz("C4") == doctest::Approx(261.62557).epsilon(1e-7));
    // A3 and A5 are exact octaves; each semitone is 2^(1/12).
    CHECK(note_to_hz("A3") == doctest::Approx(220.0).epsilon(1e-12));
    CHECK(note_to_hz("A5") == doctest::Approx(880.0).epsilon(1e-12));
    CHECK(note_to_hz("A#4") / note_to_hz("A4") == doctest::Approx(std::exp2(1.0 / 12.0)).epsilon(1e-12));
    CHECK(note_to_hz("Bb2") == doctest::Approx(note_to_hz("A#2")).epsilon(1e-12));
    CHECK(note_to_hz("F#3") == doctest::Approx(184.9972).epsilon(1e-7));
    // Other references scale every note: A4 = 415 Hz gives A3 = 207.5 Hz.
    CHECK(note_to_hz("A3", 415.0) == doctest::Approx(207.5).epsilon(1e-12));
}

TEST_CASE("frequency back to the nearest note") {
    const auto n = hz_to_note(440.0 * std::exp2(14.0 / 1200.0));
    CHECK(n.name == "A4");
    CHECK(n.offset_cents == doctest::Approx(14.0).epsilon(1e-9));
    CHECK(hz_to_note(261.6256).name == "C4");
    CHECK(hz_to_note(311.127).name == "D#4");
    CHECK(midi_to_name(-1) == "B-2");
}

TEST_CASE("roots as notes or Hz, and their bad forms") {
    CHECK(parse_frequency("A2") == doctest::Approx(110.0));
    CHECK(parse_frequency("110") == 110.0);
    CHECK(parse_frequency("110.5hz") == 110.5);
    CHECK(parse_frequency("220 Hz") == 220.0);
    CHECK_THROWS_WITH(parse_frequency("H2"), "'H2': not a note name (expected a form such as C4, F#3 or Bb2)");
    CHECK_THROWS_WITH(parse_frequency("0"), "'0': frequency out of range (1 Hz to 20 kHz)");
    CHECK_THROWS_WITH(parse_frequency("C12"), "'C12': octave out of range (-1 to 10)");
    CHECK_THROWS_WITH(check_a4(500), "A4 reference 500 Hz: out of range (400 to 480 Hz)");
}

TEST_CASE("beat rate of the coinciding partials") {
    // 7/5 over 220 Hz: the 7th partial of the root (1540 Hz) meets the 5th of
    // the upper tone. With the upper tone 4 cents sharp the pair beats at
    // |5 * f_high - 7 * 220|.
    const double f_low = 220.0;
    const double f_high = 220.0 * 7.0 / 5.0 * std::exp2(4.0 / 1200.0);
    const auto p = coinciding_pair(f_low, f_high, Ratio{7, 5});
    CHECK(p.partial_a == 7);
    CHECK(p.partial_b == 5);
    CHECK(p.beat_hz == doctest::Approx(std::fabs(5.0 * f_high - 7.0 * f_low)).epsilon(1e-12));
    CHECK(beat_rate_at(f_low, Ratio{7, 5}, 4.0) == doctest::Approx(p.beat_hz).epsilon(1e-12));
    // A pure interval does not beat.
    CHECK(coinciding_pair(200.0, 300.0, Ratio{3, 2}).beat_hz == doctest::Approx(0.0));
    // Worked example (common practice): an equal-tempered fifth over 220 Hz,
    // 329.6276 Hz, beats at |2*329.6276 - 3*220| = 0.7448 Hz.
    const double et_fifth = 220.0 * std::exp2(7.0 / 12.0);
    CHECK(coinciding_pair(220.0, et_fifth, Ratio{3, 2}).beat_hz == doctest::Approx(0.7448).epsilon(1e-3));
}

TEST_CASE("other partial pairs that come close") {
    // Over a 3/2 at 200/300 Hz the pairs (3,2), (6,4), (9,6) coincide exactly.
    const auto pairs = near_pairs(200.0, 300.0, 9, 0.5);
    REQUIRE(pairs.size() == 3);
    CHECK(pairs[0].partial_a == 3);
    CHECK(pairs[0].partial_b == 2);
    CHECK(pairs[2].partial_a == 9);
    for (const auto& p : pairs) CHECK(p.beat_hz == doctest::Approx(0.0));
}

TEST_CASE("nearest simple ratio for an irrational target (common practice)") {
    // 600 cents lies 17.488 cents from both 7/5 and 10/7; the simpler 7/5 wins.
    CHECK(nearest_simple_ratio(600.0) == Ratio{7, 5});
    CHECK(nearest_simple_ratio(700.0) == Ratio{3, 2});
    CHECK(nearest_simple_ratio(400.0) == Ratio{5, 4});
}

TEST_CASE("nearest target, with and without octave equivalence") {
    TargetSet set;
    for (const char* s : {"11/8", "7/5", "45/32", "600c", "10/7"}) set.targets.push_back({parse_interval(s), ""});
    // 590 cents: 45/32 (590.224) is nearest.
    auto m = nearest_target(set, 590.0, false);
    CHECK(set.targets[m.index].interval.str() == "45/32");
    CHECK(m.dev_cents == doctest::Approx(590.0 - 590.224).epsilon(1e-3));
    // 585 cents an octave up: octave equivalence finds 7/5 one octave higher.
    m = nearest_target(set, 1200.0 + 584.0, true);
    CHECK(set.targets[m.index].interval.str() == "7/5");
    CHECK(m.octaves == 1);
    CHECK(m.dev_cents == doctest::Approx(584.0 - 582.512).epsilon(1e-3));
    // Without octave equivalence the highest target (10/7) is nearest.
    m = nearest_target(set, 1784.0, false);
    CHECK(set.targets[m.index].interval.str() == "10/7");
    CHECK(shift_octaves(parse_interval("7/5"), -1).str() == "7/10");
    CHECK(shift_octaves(parse_interval("600c"), 1).str() == "1800c");
}

TEST_CASE("readings: the pair a listener hears for targets of high terms") {
    // 729/512's coinciding partials (729th of the root) lie far above
    // hearing; the reading also names the pair of the nearest simple ratio
    // (10/7, 5.8 cents away), which beats even on target: with the voice
    // exactly at 729/512 over 146.832 Hz, |7 * f_v - 10 * f_r| (Helmholtz's
    // formula, worked here by hand) = |7 * 209.0635 - 1468.320| = 4.875 Hz.
    pitch::TargetSet set;
    set.targets.push_back({parse_interval("729/512"), ""});
    set.targets.push_back({parse_interval("7/5"), ""});
    pitch::ReadingConfig cfg;
    cfg.root_hz = 146.832;
    pitch::ReadingMaker maker(cfg, set);
    pitch::PitchFrame f;
    f.t_s = 0.1;
    f.f0_hz = 146.832 * 729.0 / 512.0;
    f.confidence = 1.0;
    const pitch::Reading r = maker.make(f, 4800);
    CHECK(r.beat_partial_root == 729);
    CHECK(r.beat_partial_voice == 512);
    CHECK(r.beat_hz == doctest::Approx(0.0).epsilon(1e-9).scale(1.0));
    CHECK(r.heard_partial_root == 10);
    CHECK(r.heard_partial_voice == 7);
    CHECK(r.heard_beat_hz == doctest::Approx(std::fabs(7 * f.f0_hz - 10 * 146.832)).epsilon(1e-9));
    CHECK(r.heard_beat_at_target_hz == doctest::Approx(4.875).epsilon(2e-4));
    // A simple target's heard pair is its own coinciding pair.
    f.f0_hz = 146.832 * 1.4 * std::exp2(4 / 1200.0);
    pitch::ReadingMaker maker2(cfg, set);
    const pitch::Reading s = maker2.make(f, 4800);
    CHECK(s.heard_partial_root == 7);
    CHECK(s.heard_partial_voice == 5);
    CHECK(s.heard_beat_hz == doctest::Approx(s.beat_hz));
    CHECK(s.heard_beat_at_target_hz == doctest::Approx(0.0).scale(1.0).epsilon(1e-9));
}

TEST_CASE("beat bands follow the stated rate limits (common practice; roughness above ~15 Hz, Plomp & Levelt 1965)") {
    using pitch::BeatBand;
    CHECK(pitch::beat_band(NAN) == BeatBand::none);
    CHECK(pitch::beat_band(-1.0) == BeatBand::none);
    CHECK(pitch::beat_band(0.0) == BeatBand::still);
    CHECK(pitch::beat_band(0.19) == BeatBand::still);
    CHECK(pitch::beat_band(0.2) == BeatBand::countable);
    CHECK(pitch::beat_band(3.2) == BeatBand::countable);  // 3.2 Hz can be counted, not "too fast"
    CHECK(pitch::beat_band(5.0) == BeatBand::flutter);
    CHECK(pitch::beat_band(15.0) == BeatBand::flutter);
    CHECK(pitch::beat_band(15.1) == BeatBand::rough);
    pitch::BeatBands b;
    b.rough_above_hz = 20.0;
    CHECK(pitch::beat_band(18.0, b) == BeatBand::flutter);
}

// [SECTION] Audible pair
// D3 = 440 x 2^(-19/12) = 146.8324 Hz (ISO 16 and 12-TET, as above).
namespace {
const double kD3 = 440.0 * std::exp2(-19.0 / 12.0);
double at_cents(double f, double cents) { return f * std::exp2(cents / 1200.0); }
}  // namespace

TEST_CASE(
    "audible pair: a simple target's own pair, rate |q f_high - p f_low| (Helmholtz, Sensations of Tone, ch. VIII)") {
    const double voice = at_cents(220.0 * 1.25, 3.0);  // 5/4 over A3, 3 cents sharp
    const AudiblePair a = audible_pair(220.0, voice, Ratio{5, 4}.cents(), Ratio{5, 4});
    REQUIRE(a.found);
    CHECK(a.own);
    CHECK(a.partial_a == 5);
    CHECK(a.partial_b == 4);
    CHECK(a.meet_hz == doctest::Approx(1100.0));
    CHECK(a.beat_hz == doctest::Approx(std::fabs(4.0 * voice - 5.0 * 220.0)).epsilon(1e-12));
    // Helmholtz's formula worked by hand: 1100 x (2^(3/1200) - 1) = 1.9078 Hz.
    CHECK(a.beat_hz == doctest::Approx(1.9078).epsilon(1e-3));
    CHECK(a.beat_at_target_hz == 0.0);
}

TEST_CASE("audible pair: commas beat at the fundamentals' difference (Helmholtz ch. VIII with p = q = 1)") {
    // Two tones a comma apart: the fundamentals beat at f_high - f_low, even
    // when the comma is exact. 81/80 over D3: 146.8324 / 80 = 1.8354 Hz.
    struct Case {
        const char* ratio;
        double at_target_hz;  // worked by hand: D3 x (ratio - 1)
    };
    const Case cases[] = {
        {"81/80", kD3 / 80.0},                      // syntonic comma: 1.8354 Hz
        {"64/63", kD3 / 63.0},                      // septimal comma: 2.3307 Hz
        {"50/49", kD3 / 49.0},                      // septimal sixth-tone: 2.9966 Hz
        {"128/125", kD3 * 3.0 / 125.0},             // lesser diesis: 3.5240 Hz
        {"531441/524288", kD3 * 7153.0 / 524288.0}  // Pythagorean comma: 2.0033 Hz
    };
    for (const Case& c : cases) {
        CAPTURE(c.ratio);
        const Interval iv = parse_interval(c.ratio);
        const AudiblePair a = audible_pair(kD3, kD3 * iv.value(), iv.cents(), iv.ratio());
        REQUIRE(a.found);
        CHECK_FALSE(a.own);
        CHECK(a.partial_a == 1);
        CHECK(a.partial_b == 1);
        CHECK(a.beat_at_target_hz == doctest::Approx(c.at_target_hz).epsilon(1e-9));
        CHECK(a.beat_hz == doctest::Approx(c.at_target_hz).epsilon(1e-9));
    }
    CHECK(kD3 / 80.0 == doctest::Approx(1.8354).epsilon(1e-4));
    // A comma above the octave: the drone's octave partial against the voice.
    const Interval up = parse_interval("81/40");
    const AudiblePair o = audible_pair(kD3, kD3 * up.value(), up.cents(), up.ratio());
    REQUIRE(o.found);
    CHECK(o.partial_a == 2);
    CHECK(o.partial_b == 1);
    CHECK(o.beat_at_target_hz == doctest::Approx(2.0 * kD3 / 80.0).epsilon(1e-9));
}

TEST_CASE("audible pair: 729/512 and 45/32 beat like the nearest simple ratio, below the stated frequency limit") {
    // 729/512 = 611.73 c; 10/7 = 617.49 c is the nearest ratio of terms <= 10
    // (7/5 = 582.51 c); exactly in tune over D3, |7 f_v - 10 f_r| =
    // |7 x 209.0635 - 1468.324| = 4.8753 Hz (Helmholtz's formula by hand).
    const Interval iv = parse_interval("729/512");
    const AudiblePair a = audible_pair(kD3, kD3 * iv.value(), iv.cents(), iv.ratio());
    REQUIRE(a.found);
    CHECK_FALSE(a.own);
    CHECK(a.partial_a == 10);
    CHECK(a.partial_b == 7);
    CHECK(a.beat_at_target_hz == doctest::Approx(std::fabs(7.0 * kD3 * iv.value() - 10.0 * kD3)).epsilon(1e-12));
    CHECK(a.beat_at_target_hz == doctest::Approx(4.8753).epsilon(1e-4));
    // 45/32 = 590.22 c: 7/5 (7.71 c away) is nearer than 10/7 (27.3 c).
    const Interval t = parse_interval("45/32");
    const double voice = at_cents(kD3 * t.value(), 3.0);
    const AudiblePair b = audible_pair(kD3, voice, t.cents(), t.ratio());
    REQUIRE(b.found);
    CHECK(b.partial_a == 7);
    CHECK(b.partial_b == 5);
    CHECK(b.beat_hz == doctest::Approx(std::fabs(5.0 * voice - 7.0 * kD3)).epsilon(1e-12));
    // Over any root from A1 to A5 the pair named lies at or below the limit
    // and within the partials present.
    const AudibleRange range;
    for (double root = 55.0; root <= 880.0; root *= std::exp2(1.0 / 12.0)) {
        for (const char* r : {"729/512", "45/32", "15/8", "81/64", "7/4", "3/2", "16/15"}) {
            const Interval x = parse_interval(r);
            const AudiblePair p = audible_pair(root, root * x.value(), x.cents(), x.ratio(), range);
            if (!p.found) continue;
            CAPTURE(root);
            CAPTURE(r);
            CHECK(p.meet_hz <= range.max_freq_hz);
            CHECK(p.partial_a <= range.partials_a);
            CHECK(p.partial_b <= range.partials_b);
        }
    }
}

TEST_CASE("audible pair follows the drone's partials (common practice: a partial that is not sounded cannot beat)") {
    AudibleRange pure;
    pure.partials_a = 1;
    const Interval fifth = parse_interval("3/2");
    CHECK_FALSE(audible_pair(220.0, 330.0, fifth.cents(), fifth.ratio(), pure).found);
    const AudiblePair uni = audible_pair(220.0, 221.0, 0.0, Ratio{1, 1}, pure);
    REQUIRE(uni.found);
    CHECK(uni.beat_hz == doctest::Approx(1.0));
    // A soft drone (6 partials) has no 7th: 7/5 falls back to 4/3 (84.5 c away,
    // within a semitone), whose partials 4 and 3 do sound.
    AudibleRange soft;
    soft.partials_a = 6;
    const Interval sept = parse_interval("7/5");
    const AudiblePair s = audible_pair(220.0, 308.0, sept.cents(), sept.ratio(), soft);
    REQUIRE(s.found);
    CHECK(s.partial_a == 4);
    CHECK(s.partial_b == 3);
    CHECK(s.beat_at_target_hz == doctest::Approx(std::fabs(3.0 * 308.0 - 4.0 * 220.0)).epsilon(1e-12));
}
