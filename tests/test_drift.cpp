// Progressions and comma drift.
//
// Sources: the syntonic comma 81/80 = 21.506 cents and the drift of
// I-vi-ii-V-I by one comma when common tones are held are textbook facts of
// just intonation (e.g. J. M. Barbour, Tuning and Temperament, 1951; from
// memory). The septimal comma 64/63 = 27.264 cents is from interval tables
// (from memory). The just major scale 1/1 9/8 5/4 4/3 3/2 5/3 15/8 is
// Zarlino's (Le istitutioni harmoniche, 1558; from memory); the natural
// minor 1/1 9/8 6/5 4/3 3/2 8/5 9/5 is common practice. The progressions'
// drifts are also worked by hand in the comments.
#include "pitch/base/error.h"
#include "pitch/theory/progression.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <string>

using namespace beatless;
using namespace beatless::pitch;

namespace {

std::string error_of(const char* text, std::optional<KeyMode> mode = {}) {
    try {
        (void)parse_progression(text, mode);
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}

Ratio octave_class(Ratio r) { return octave_reduce(r); }

bool in_scale(const Ratio& r, const std::vector<Ratio>& scale) {
    return std::find(scale.begin(), scale.end(), octave_class(r)) != scale.end();
}

}  // namespace

TEST_CASE("I vi ii V I: common tones held drift a syntonic comma flat; a fixed root does not drift") {
    // By hand (5-limit, tonic C = 1/1; ii stands on 10/9):
    //   I   C E G    = 1, 5/4, 3/2
    //   vi  A C E    holds C and E, so A = 5/3 as in the fixed-root place
    //   ii  D F A    holds A = 5/3; D = 5/3 / (3/2) = 10/9, again the fixed place
    //   V   G B D    holds D = 10/9 (20/9); G = 20/9 / (3/2) = 40/27, a comma
    //                below the fixed 3/2: (40/27) / (3/2) = 80/81
    //   I   C E G    holds G = 40/27; C = 40/27 / (3/2) = 80/81
    // so the tonic ends 80/81 low: 1200 log2(80/81) = -21.506 cents.
    const Progression p = parse_progression("I vi ii V I");
    CHECK(p.mode == KeyMode::major);
    const ProgressionTuning held = tune_progression(p, DriftRule::common_tones);
    CHECK(std::fabs(held.drift_cents + 21.506) < 5e-4);
    REQUIRE(held.drift.has_value());
    CHECK(*held.drift == Ratio{80, 81});
    REQUIRE(held.causes.size() == 1);
    CHECK(held.causes[0] == 3);  // the change ii -> V
    CHECK(std::fabs(held.chords[3].step_cents + 21.506) < 5e-4);
    REQUIRE(held.chords[4].voices[0].ratio.has_value());
    CHECK(*held.chords[4].voices[0].ratio == Ratio{80, 81});
    CHECK(*held.chords[3].voices[0].ratio == Ratio{40, 27});
    for (std::size_t k = 1; k < held.chords.size(); ++k)
        for (const auto& ct : held.chords[k].common) CHECK(ct.held);

    const ProgressionTuning fixed = tune_progression(p, DriftRule::fixed_root);
    CHECK(fixed.drift_cents == 0.0);
    CHECK(*fixed.drift == Ratio{1, 1});
    CHECK(fixed.causes.empty());
    // Instead the common tone D moves up a comma at ii -> V: 10/9 -> 9/8.
    const auto& v = fixed.chords[3];
    REQUIRE(v.common.size() == 1);
    CHECK(v.common[0].pitch_class == 2);
    CHECK_FALSE(v.common[0].held);
    CHECK(std::fabs(v.common[0].motion_cents - 21.506) < 5e-4);
    // The written notes keep their names; the drifted tonic is C, 21.5 cents flat.
    CHECK(held.chords[4].voices[0].step == 0);
    CHECK(std::fabs(held.chords[4].voices[0].et_offset_cents + 21.506) < 5e-4);
}

TEST_CASE("with ii on 9/8 the same comma appears one change earlier") {
    // By hand: vi holds A = 5/3; ii = 9/8:10:12:15 has A at 9/8 * 3/2 = 27/16,
    // so ii moves by (5/3)/(27/16) = 80/81 at vi -> ii; V and I then hold.
    const Progression p = parse_progression("1/1:4:5:6 5/3:10:12:15 9/8:10:12:15 3/2:4:5:6 1/1:4:5:6");
    const ProgressionTuning held = tune_progression(p, DriftRule::common_tones);
    CHECK(*held.drift == Ratio{80, 81});
    REQUIRE(held.causes.size() == 1);
    CHECK(held.causes[0] == 2);
}

TEST_CASE("septimal example: a harmonic seventh held as the root of a Pythagorean Bb chord") {
    // By hand: C7 = 1/1:4:5:6:7 has Bb = 7/4. The next chord Bb D F is
    // 16/9:4:5:6 (Bb = 16/9). Holding Bb moves it by (7/4)/(16/9) = 63/64,
    // i.e. 1200 log2(63/64) = -27.264 cents (the septimal comma 64/63).
    // F major (4/3:4:5:6) then holds F = 21/8 (8/3 * 63/64), and C major
    // holds C: the passage ends 63/64 low. With a fixed root the common tone
    // Bb instead rises 27.264 cents from 7/4 to 16/9.
    const Progression p = parse_progression("1/1:4:5:6:7 16/9:4:5:6 4/3:4:5:6 1/1:4:5:6");
    const ProgressionTuning held = tune_progression(p, DriftRule::common_tones);
    CHECK(std::fabs(held.drift_cents + 27.264) < 5e-4);
    CHECK(*held.drift == Ratio{63, 64});
    REQUIRE(held.causes.size() == 1);
    CHECK(held.causes[0] == 1);
    const ProgressionTuning fixed = tune_progression(p, DriftRule::fixed_root);
    CHECK(fixed.drift_cents == 0.0);
    REQUIRE(fixed.chords[1].common.size() == 1);
    CHECK(fixed.chords[1].common[0].pitch_class == 10);
    CHECK(std::fabs(fixed.chords[1].common[0].motion_cents - 27.264) < 5e-4);
}

TEST_CASE("septimal example 2: the seventh of a harmonic A7 against the G of C major") {
    // By hand: I = C E G (1, 5/4, 3/2). A7 = 5/3:4:5:6:7 has C# = 25/24,
    // E = 5/3 * 3/2 = 5/2 (class 5/4) and G = 5/3 * 7/4 = 35/12 (class 35/24).
    // I -> A7 shares E and G. Holding E needs no shift; holding G needs
    // (3/2)/(35/24) = 36/35 (+48.770 cents, the septimal diesis). One vote
    // each, so the tie goes to the shift nearer the chord before (0): E is
    // held and G falls 48.770 cents. A7 -> I is the mirror image: E held, G
    // rises 48.770 cents, and the passage ends where it began.
    const Progression p = parse_progression("1/1:4:5:6 5/3:4:5:6:7 1/1:4:5:6");
    const ProgressionTuning held = tune_progression(p, DriftRule::common_tones);
    CHECK(held.drift_cents == 0.0);
    CHECK(held.causes.empty());
    for (std::size_t k = 1; k <= 2; ++k) {
        const auto& common = held.chords[k].common;
        REQUIRE(common.size() == 2);
        const auto g =
            std::find_if(common.begin(), common.end(), [](const CommonTone& c) { return c.pitch_class == 7; });
        const auto e =
            std::find_if(common.begin(), common.end(), [](const CommonTone& c) { return c.pitch_class == 4; });
        REQUIRE(g != common.end());
        REQUIRE(e != common.end());
        CHECK(e->held);
        CHECK_FALSE(g->held);
        CHECK(std::fabs(g->motion_cents - (k == 1 ? -48.770 : 48.770)) < 5e-4);
    }
}

TEST_CASE("rules for several and for no common tones") {
    // ii -> V7: D proposes -21.506, F (4/3 in both) proposes 0; a tie goes to
    // the shift nearer the chord before, so F is held and D moves.
    const ProgressionTuning t = tune_progression(parse_progression("I vi ii V7 I"), DriftRule::common_tones);
    CHECK(t.drift_cents == 0.0);
    const auto& v7 = t.chords[3].common;
    REQUIRE(v7.size() == 2);
    int held = 0;
    for (const auto& c : v7) held += c.held ? 1 : 0;
    CHECK(held == 1);
    // iv -> V share nothing: V moves by its own just step and keeps the shift.
    const ProgressionTuning m = tune_progression(parse_progression("i iv V i"), DriftRule::common_tones);
    CHECK(m.chords[2].common.empty());
    CHECK(m.drift_cents == 0.0);
    // Two common tones that agree: I -> iii hold E and G.
    const ProgressionTuning e = tune_progression(parse_progression("I iii"), DriftRule::common_tones);
    REQUIRE(e.chords[1].common.size() == 2);
    CHECK(e.chords[1].common[0].held);
    CHECK(e.chords[1].common[1].held);
    // Majority over nearness: after C E G, the chord C+ E G+ (81/80:162:200:243,
    // i.e. 81/80, 5/4, 243/160) has C and G asking for 80/81 and E for 1/1.
    // Two votes beat one even though 1/1 is nearer: the chord drops a comma
    // and E, the odd one out, falls 21.506 cents.
    const ProgressionTuning v =
        tune_progression(parse_progression("1/1:4:5:6 81/80:162:200:243"), DriftRule::common_tones);
    REQUIRE(v.chords[1].shift.has_value());
    CHECK(*v.chords[1].shift == Ratio{80, 81});
    const auto& c = v.chords[1].common;
    REQUIRE(c.size() == 3);
    CHECK(c[0].held);
    CHECK_FALSE(c[1].held);
    CHECK(std::fabs(c[1].motion_cents + 21.506) < 5e-4);
    CHECK(c[2].held);
}

TEST_CASE("degree tables: chords are just and use the scale's tones (with ii on 10/9)") {
    const std::vector<Ratio> major_scale = {{1, 1}, {9, 8}, {5, 4}, {4, 3}, {3, 2}, {5, 3}, {15, 8}};
    const std::vector<Ratio> minor_scale = {{1, 1}, {9, 8}, {6, 5}, {4, 3}, {3, 2}, {8, 5}, {9, 5}, {15, 8}};
    const Progression maj = parse_progression("I ii iii IV V vi vii° I7 ii7 iii7 IV7 V7 vi7 viiø7", KeyMode::major);
    for (const auto& pc : maj.chords) {
        for (std::size_t i = 0; i < pc.chord.size(); ++i) {
            const Ratio tone = pc.root * pc.chord.voice_ratio(i);
            if (pc.symbol.starts_with("ii") && !pc.symbol.starts_with("iii") && i == 0) {
                CHECK(tone == Ratio{10, 9});  // the grave D, a comma below 9/8
            } else {
                CHECK_MESSAGE(in_scale(tone, major_scale), pc.symbol, " voice ", i + 1, " = ", tone.str());
            }
        }
    }
    // Major triads are 4:5:6 and minor ones 10:12:15 (just thirds and fifths).
    CHECK(maj.chords[0].chord.terms_text() == "4:5:6");
    CHECK(maj.chords[1].chord.terms_text() == "10:12:15");
    CHECK(maj.chords[12].chord.terms_text() == "10:12:15:18");
    CHECK(maj.chords[11].chord.terms_text() == "36:45:54:64");  // V7 with F = 16/9 above G

    const Progression min =
        parse_progression("i ii° III iv v V VI VII vii° i7 iiø7 III7 iv7 V7 VI7 vii°7", KeyMode::minor);
    int outside = 0;
    for (const auto& pc : min.chords) {
        for (std::size_t i = 0; i < pc.chord.size(); ++i) {
            const Ratio tone = octave_class(pc.root * pc.chord.voice_ratio(i));
            if (in_scale(tone, minor_scale) || tone == Ratio{10, 9}) continue;
            CHECK(tone == Ratio{27, 20});  // F a comma sharp, in v and VII (header table)
            ++outside;
        }
    }
    CHECK(outside == 1);  // VII's F (v7 is not in this list)
}

TEST_CASE("mode from the numerals, keys and their spelling") {
    CHECK(parse_progression("i iv V i").mode == KeyMode::minor);
    CHECK(parse_progression("I IV V I").mode == KeyMode::major);
    CHECK(parse_progression("V I").mode == KeyMode::major);
    CHECK(parse_progression("I-vi-ii-V").chords.size() == 4);
    CHECK(parse_progression("I\xE2\x80\x93vi\xE2\x80\x93ii").chords.size() == 3);  // en dashes
    CHECK(parse_progression("I, IV, V").chords.size() == 3);
    const Key a = parse_key("A minor", 440.0);
    CHECK(a.tonic.name() == "A");
    CHECK(a.mode == KeyMode::minor);
    CHECK(std::fabs(a.tonic_hz - 440.0) < 1e-9);  // A4 by ISO 16
    const Key eb = parse_key("Eb3", 440.0);
    CHECK(!eb.mode.has_value());
    CHECK(std::fabs(eb.tonic_hz - 155.5635) < 1e-4);  // MIDI 51 in 12-TET
    const Key fs = parse_key("F#m", 440.0);
    CHECK(fs.tonic.name() == "F#");
    CHECK(fs.mode == KeyMode::minor);
    CHECK(parse_key("Bb major", 440.0).mode == KeyMode::major);
    CHECK_THROWS_WITH_AS(parse_key("H", 440.0), "'H': not a key (expected a form such as C, Eb3, A minor or F#m)",
                         Error);
}

TEST_CASE("bad progressions give one-line messages naming the token") {
    CHECK(error_of("I VIII V") == "'VIII': not a scale degree (I to VII)");
    CHECK(error_of("") ==
          "'': empty progression (write Roman numerals such as \"I vi ii V I\" or chords such as 5/3:10:12:15)");
    CHECK(error_of(" - , ").find("empty progression") != std::string::npos);
    CHECK(error_of("Vi") ==
          "'Vi': mixes upper and lower case (upper case for a major chord, lower for minor or diminished)");
    CHECK(error_of("I vii") == "'vii': in a major key this chord is written vii°");
    CHECK(error_of("I vii°7") == "'vii°7': in a major key this chord is written viiø7");
    CHECK(error_of("I iv", KeyMode::major) ==
          "'iv': not a chord of a major key (its chords are I ii iii IV V vi vii°, or write it as 4/3:10:12:15)");
    CHECK(error_of("I iv").find("mixes numerals of a major key (I) and a minor key (iv)") != std::string::npos);
    CHECK(error_of("4:5:6") ==
          "'4:5:6': an explicit chord needs its root ratio first, as in 1/1:4:5:6 or 5/3:10:12:15");
    CHECK(error_of("1/1:4:0:6") == "'1/1:4:0:6': chord terms must be positive");
    CHECK(error_of("x/1:4:5:6").find("'x/1:4:5:6': ") == 0);
    CHECK(error_of("bVII").find("chromatic numerals are not supported") != std::string::npos);
    CHECK(error_of("V9") ==
          "'V9': unknown chord suffix '9' (a Roman numeral takes ° or o for diminished, ø or /o for "
          "half-diminished, and 7)");
    CHECK(error_of("V/V").find("secondary chords") != std::string::npos);
    CHECK(error_of("X").find("not a Roman numeral or a chord") != std::string::npos);
}

TEST_CASE("a long pump keeps exact cents after the ratios outgrow 64 bits") {
    // Thirty rounds of I vi ii V drift thirty commas: -645.188 cents. 80^30
    // does not fit 64 bits, so the exact ratio is given up, not wrapped.
    std::string text;
    for (int i = 0; i < 30; ++i) text += "I vi ii V ";
    text += "I";
    const ProgressionTuning t = tune_progression(parse_progression(text), DriftRule::common_tones);
    CHECK(std::fabs(t.drift_cents - 30.0 * 1200.0 * std::log2(80.0 / 81.0)) < 1e-6);
    CHECK_FALSE(t.drift.has_value());
    CHECK(t.causes.size() == 30);
}
