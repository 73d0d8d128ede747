// MIDI tuning: MTS frequency words, the bulk tuning dump, the real-time
// single-note tuning change, pitch bend, and a target set laid on the keys.
//
// Sources: MIDI Manufacturers Association, "MIDI Tuning Messages" (MIDI 1.0
// Detailed Specification 4.2; CA-020, CA-021, RP-020): the frequency word
// xx yy zz (semitone over MIDI note 0 with note 69 = 440 Hz, then a 14-bit
// fraction in 100/16384 cent steps), the bulk dump layout F0 7E dev 08 01 tt
// name(16) 128 x (xx yy zz) checksum F7 with the checksum the XOR of 7E ..
// the last data byte masked to 7 bits, the real-time change F0 7F dev 08 02
// tt ll (kk xx yy zz)... F7, and the table of example words (00 00 00 =
// 8.1758 Hz, 3C 00 00 = 261.6256 Hz, 44 7F 7F = 439.9984 Hz, 45 00 00 = 440
// Hz, 45 00 01 = 440.0016 Hz), from memory of that table. Pitch bend: MIDI
// 1.0 Detailed Specification, a 14-bit value with centre 2000H (8192); the
// bend range is the receiver's RPN 0, so cents = 100 * range * (v - 8192) / 8192.
// Cents: 1200 log2(7/5) = 582.512 (Huygens-Fokker list of intervals).
#include "pitch/theory/key_map.h"
#include "pitch/theory/midi_tuning.h"
#include "pitch/theory/notes.h"

#include <doctest/doctest.h>

#include <array>
#include <cmath>
#include <cstdint>
#include <vector>

using namespace beatless;
using namespace beatless::pitch;

namespace {

std::array<std::uint8_t, 3> bytes(MtsWord w) { return {w.semitone, w.msb, w.lsb}; }

pitch::TargetSet set_of(std::initializer_list<std::pair<std::int64_t, std::int64_t>> ratios) {
    pitch::TargetSet s;
    s.id = "test";
    for (auto [n, d] : ratios) s.targets.push_back({pitch::Interval::of(pitch::Ratio::make(n, d)), ""});
    return s;
}

}  // namespace

TEST_CASE("MTS frequency words match the standard's table of examples") {
    struct Row {
        std::array<std::uint8_t, 3> word;
        double freq_hz;
    };
    const Row table[] = {{{0x00, 0x00, 0x00}, 8.1758},
                         {{0x3C, 0x00, 0x00}, 261.6256},
                         {{0x44, 0x7F, 0x7F}, 439.9984},
                         {{0x45, 0x00, 0x00}, 440.0000},
                         {{0x45, 0x00, 0x01}, 440.0016}};
    for (const Row& r : table) {
        CAPTURE(r.freq_hz);
        const MtsWord w{r.word[0], r.word[1], r.word[2]};
        CHECK(mts_freq_hz(w) == doctest::Approx(r.freq_hz).epsilon(5e-5 / r.freq_hz));  // table gives 4 decimals
        CHECK(bytes(mts_word(mts_freq_hz(w))) == r.word);                               // and back, exactly
    }
    // One step is 100/16384 = 0.0061 cents (the standard's resolution).
    CHECK(kMtsCentsPerStep == doctest::Approx(0.0061).epsilon(0.01));
    // Out of range: the lowest word, and 7F 7F 7E at the top (7F 7F 7F is "no change").
    CHECK(bytes(mts_word(1.0)) == std::array<std::uint8_t, 3>{0, 0, 0});
    CHECK(bytes(mts_word(20000.0)) == std::array<std::uint8_t, 3>{0x7F, 0x7F, 0x7E});
    CHECK(bytes(mts_word(std::nan(""))) == std::array<std::uint8_t, 3>{0, 0, 0});
}

TEST_CASE("a note retuned to 7/5 above D3: semitone and 14-bit fraction") {
    // D3 = MIDI 50 = 146.832 Hz (A4 = 440, ISO 16). 7/5 is 582.512 c = 5.825122
    // semitones above it: note 55.825122, so xx = 55 = 37H and the fraction is
    // 0.825122 x 16384 = 13518.8 -> 13519 = 69H << 7 | 4FH (worked by hand
    // from the standard's formula).
    const double d3 = note_to_hz("D3");
    const MtsWord w = mts_word(d3 * 7.0 / 5.0);
    CHECK(w.semitone == 55);
    CHECK(w.fraction() == 13519);
    CHECK(bytes(w) == std::array<std::uint8_t, 3>{0x37, 0x69, 0x4F});
    // The word stands within half a step (0.003 c) of the exact frequency.
    CHECK(std::abs(1200.0 * std::log2(mts_freq_hz(w) / (d3 * 1.4))) <= kMtsCentsPerStep / 2);

    // Real-time single-note tuning change of key 56 (G#3) to it, program 0, all devices.
    const MtsNoteChange change{56, d3 * 7.0 / 5.0};
    const std::vector<std::uint8_t> want = {0xF0, 0x7F, 0x7F, 0x08, 0x02, 0x00, 0x01, 0x38, 0x37, 0x69, 0x4F, 0xF7};
    CHECK(mts_single_note_change(0x7F, 0, std::span(&change, 1)) == want);
    // Two changes in one message: count 2, then key + word each.
    const MtsNoteChange two[] = {{50, d3}, {56, d3 * 1.4}};
    const std::vector<std::uint8_t> want2 = {0xF0, 0x7F, 0x00, 0x08, 0x02, 0x05, 0x02, 0x32,
                                             0x32, 0x00, 0x00, 0x38, 0x37, 0x69, 0x4F, 0xF7};
    CHECK(mts_single_note_change(0x00, 5, two) == want2);
    CHECK_THROWS(mts_single_note_change(0, 0, std::span<const MtsNoteChange>()));
}

TEST_CASE("the bulk tuning dump has the standard's layout and checksum") {
    std::array<double, 128> hz{};
    for (int k = 0; k < 128; ++k) hz[static_cast<std::size_t>(k)] = 440.0 * std::exp2((k - 69) / 12.0);
    hz[56] = note_to_hz("D3") * 1.4;
    const auto m = mts_bulk_dump(0x10, 3, "tritones", hz);
    REQUIRE(m.size() == 408);  // 6 header + 16 name + 384 data + checksum + F7
    CHECK(std::vector<std::uint8_t>(m.begin(), m.begin() + 6) ==
          std::vector<std::uint8_t>{0xF0, 0x7E, 0x10, 0x08, 0x01, 0x03});
    CHECK(std::string(m.begin() + 6, m.begin() + 22) == "tritones        ");  // padded with spaces
    // Equal-tempered keys are xx 00 00 with xx the key itself.
    for (std::size_t k = 0; k < 128; ++k) {
        CAPTURE(k);
        const std::size_t at = 22 + 3 * k;
        if (k == 56) continue;
        CHECK(m[at] == k);
        CHECK(m[at + 1] == 0);
        CHECK(m[at + 2] == 0);
    }
    CHECK(std::vector<std::uint8_t>(m.begin() + 22 + 3 * 56, m.begin() + 22 + 3 * 57) ==
          std::vector<std::uint8_t>{0x37, 0x69, 0x4F});
    // Checksum: XOR of 7E through the last data byte, 7 bits (computed here byte by byte).
    std::uint8_t x = 0;
    for (std::size_t i = 1; i < 406; ++i) x = static_cast<std::uint8_t>(x ^ m[i]);
    CHECK(m[406] == (x & 0x7F));
    CHECK(m[407] == 0xF7);
    for (std::size_t i = 1; i < 407; ++i) CHECK(m[i] < 0x80);  // every data byte is 7-bit
    // Names are cut to 16 characters and non-ASCII bytes replaced.
    const auto long_name = mts_bulk_dump(0, 0, "harmonic-series-lydian", hz);
    CHECK(std::string(long_name.begin() + 6, long_name.begin() + 22) == "harmonic-series-");
    const auto odd_name = mts_bulk_dump(0, 0, "t\xC3\xA9", hz);
    CHECK(std::string(odd_name.begin() + 6, odd_name.begin() + 10) == "t?? ");
}

TEST_CASE("pitch bend values follow the bend-range formula") {
    // v = 8192 + 8192 * cents / (100 * range): +50 c with +-2 semitones is
    // 8192 + 2048; -1 semitone is 4096; the full +range is one past the top.
    CHECK(pitch_bend(50.0, 2.0).value == 10240);
    CHECK(pitch_bend(-100.0, 2.0).value == 4096);
    CHECK(pitch_bend(0.0, 2.0).value == 8192);
    CHECK(pitch_bend(-200.0, 2.0).value == 0);
    CHECK(pitch_bend(-200.0, 2.0).exact);
    CHECK(pitch_bend(200.0, 2.0).value == 16383);
    CHECK_FALSE(pitch_bend(200.0, 2.0).exact);
    CHECK_FALSE(pitch_bend(300.0, 2.0).exact);
    // 7/5 over D3 without MTS: key 56 (G#3) bent down 17.488 c; with a range
    // of 2 semitones 8192 - round(8192 * 17.488 / 200) = 8192 - 716 = 7476.
    const KeyAndBend kb = key_and_bend(note_to_hz("D3") * 1.4);
    CHECK(kb.key == 56);
    CHECK(kb.bend_cents == doctest::Approx(582.512 - 600.0).epsilon(1e-4));
    CHECK(pitch_bend(kb.bend_cents, 2.0).value == 7476);
    // Back through the formula the bend lands within one bend step (range/8192 semitones).
    const double back_cents = 100.0 * 2.0 * (7476 - 8192) / 8192.0;
    CHECK(std::abs(back_cents - kb.bend_cents) <= 100.0 * 2.0 / 8192.0);
}

TEST_CASE("a target set on the keys: nearest step, octaves, collisions, sequence") {
    // 8:9:10:11:12 over its lowest voice: 9/8 on the whole tone, 5/4 on the
    // major third, 11/8 on the tritone (551.3 c rounds to 6 steps), 3/2 on the fifth.
    const double d3 = note_to_hz("D3");
    const auto map = map_targets_to_keys(set_of({{9, 8}, {5, 4}, {11, 8}, {3, 2}}), d3, 50);
    CHECK(map.keys[50].freq_hz == doctest::Approx(d3));
    CHECK(map.keys[52].freq_hz == doctest::Approx(d3 * 9 / 8));
    CHECK(map.keys[54].freq_hz == doctest::Approx(d3 * 5 / 4));
    CHECK(map.keys[56].freq_hz == doctest::Approx(d3 * 11 / 8));
    CHECK(map.keys[57].freq_hz == doctest::Approx(d3 * 3 / 2));
    CHECK(map.keys[69].freq_hz == doctest::Approx(d3 * 3));                    // 3/2 an octave up
    CHECK(map.keys[45].freq_hz == doctest::Approx(d3 * 3 / 4));                // and an octave down
    CHECK(map.keys[51].freq_hz == doctest::Approx(d3 * std::exp2(1.0 / 12)));  // no target: 12-TET from the root
    CHECK(map.keys[51].target == -1);
    CHECK(map.unplaced.empty());
    // 7/5 (582.5 c) and 600c both want the tritone key; the nearer keeps it.
    pitch::TargetSet both = set_of({{7, 5}});
    both.targets.push_back({pitch::Interval::from_cents(600.0), ""});
    const auto m2 = map_targets_to_keys(both, d3, 50);
    CHECK(m2.keys[56].target == 1);
    REQUIRE(m2.unplaced.size() == 1);
    CHECK(m2.unplaced[0] == 0);
    // 1/1 and 2/1 are one pitch class: neither is left out.
    CHECK(map_targets_to_keys(set_of({{1, 1}, {2, 1}}), d3, 50).unplaced.empty());
    // Sequence: root, then each target a key, repeating an octave up.
    const auto seq = map_targets_to_keys(both, d3, 50, KeyLayout::sequence);
    CHECK(seq.keys[50].freq_hz == doctest::Approx(d3));
    CHECK(seq.keys[51].freq_hz == doctest::Approx(d3 * 1.4));
    CHECK(seq.keys[52].freq_hz == doctest::Approx(d3 * std::sqrt(2.0)));
    CHECK(seq.keys[53].freq_hz == doctest::Approx(d3 * 2));
    CHECK(seq.keys[49].freq_hz == doctest::Approx(d3 * std::sqrt(2.0) / 2));
}
