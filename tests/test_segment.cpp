// NoteSegmenter and NoteSummary on tracker frames with exactly known content.
//
// The real tracker (pitch/dsp/yin.h) is not in this branch, so frames are made
// from known f0 paths (tests/mix_signals.h frames_of): a frame every 5 ms,
// t at the estimate's centre, f0 from the note's path plus Gaussian jitter,
// f0 = 0 between notes or the drone's own frequency where the tracker would
// hear the drone. Sources: the bar (every note found, deviation within 1
// cent, the right target) is the review issue's; beat rates of the
// coinciding pair, p * f_root * |2^(d/1200) - 1| for a target p/q mistuned
// by d cents (Helmholtz, On the Sensations of Tone, ch. VIII; checked with
// pitch/theory/beats.h beat_rate_at, an independent closed form); cents by Ellis
// (1885).
#include "pitch/base/error.h"
#include "pitch/measure/segment.h"
#include "pitch/theory/beats.h"
#include "tests/mix_signals.h"

#include "ui/session/take_words.h"

#include <doctest/doctest.h>

#include <cmath>
#include <string>
#include <vector>

using namespace beatless;
using namespace beatless::pitch;
using namespace beatless::testsig;

namespace {
int index_of(const TargetSet& set, const char* text) {
    for (std::size_t i = 0; i < set.targets.size(); ++i)
        if (set.targets[i].interval.str() == text) return static_cast<int>(i);
    return -1;
}

std::vector<NoteResult> segment(const std::vector<PitchFrame>& frames, const SegmentConfig& cfg, const TargetSet& set,
                                NoteSegmenter** keep = nullptr) {
    static std::vector<NoteSegmenter> owner;  // lets a test look at the counters afterwards
    owner.clear();
    owner.emplace_back(cfg, set);
    NoteSegmenter& seg = owner.back();
    std::vector<NoteResult> notes;
    NoteResult r;
    for (const PitchFrame& f : frames)
        if (seg.push(f, r)) notes.push_back(r);
    if (seg.finish(r)) notes.push_back(r);
    if (keep) *keep = &seg;
    return notes;
}
}  // namespace

TEST_CASE("a voice holding five mistuned tritones over a drone: every note, within 1 cent, the right target") {
    const TargetSet set = tritone_set();
    const char* names[] = {"7/5", "10/7", "11/8", "45/32", "16/11"};
    const auto truth = tritone_notes();
    for (double root : {110.0, 146.8324, 87.31}) {
        for (std::uint64_t seed : {1u, 2u, 3u}) {
            const auto notes = take_notes(root, truth, seed);
            const double dur = notes.back().end_s + 0.5;
            // 0.5-cent tracker jitter; the drone leaks into the tracker between notes.
            const auto frames = frames_of(notes, dur, 0.005, 0.5, seed + 10, root);
            SegmentConfig cfg;
            cfg.root_hz = root;
            cfg.audible.partials_a = 16;  // a drone sounding 16 partials
            NoteSegmenter* seg = nullptr;
            const auto found = segment(frames, cfg, set, &seg);
            CAPTURE(root);
            CAPTURE(seed);
            REQUIRE(found.size() == truth.size());
            CHECK(seg->drone_frames() > 100);
            for (std::size_t i = 0; i < truth.size(); ++i) {
                const NoteResult& n = found[i];
                CAPTURE(i);
                CHECK(n.target_index == index_of(set, names[i]));
                CHECK(n.target_octaves == 1);
                CHECK(std::fabs(n.dev_cents - truth[i].second) < 1.0);
                CHECK(std::fabs(n.start_s - notes[i].start_s) < 0.01);
                CHECK(std::fabs(n.end_s - notes[i].end_s) < 0.01);
                CHECK(n.vibrato);
                CHECK(std::fabs(n.vibrato_rate_hz - notes[i].vib_rate_hz) < 0.2);
                CHECK(n.vibrato_depth_cents == doctest::Approx(notes[i].vib_depth_cents).epsilon(0.15));
                // Spread of a sinusoidal vibrato: depth / sqrt(2) (textbook RMS).
                CHECK(n.spread_cents == doctest::Approx(notes[i].vib_depth_cents / std::sqrt(2.0)).epsilon(0.15));
                CHECK(std::isfinite(n.settle_s));
                CHECK(n.settle_s < 0.6);
                CHECK(std::fabs(n.ratio - notes[i].centre_hz / root) / n.ratio < 1e-3);
                // Beat of the audible pair: the target's own coinciding pair
                // when the drone sounds it below 4 kHz, from an independent
                // closed form; otherwise a pair within those limits whose
                // rate is |q f - p root| (Helmholtz, Sensations of Tone, ch. VIII).
                const Ratio r = beating_ratio(set.targets[static_cast<std::size_t>(n.target_index)].interval, 1);
                CHECK(n.own_partial_root == r.num);
                CHECK(n.own_partial_voice == r.den);
                if (r.num <= 16 && r.den <= 16 && static_cast<double>(r.num) * root <= 4000.0) {
                    CHECK(n.partial_root == r.num);
                    CHECK(n.partial_voice == r.den);
                    const double expect = beat_rate_at(root, r, truth[i].second);
                    CHECK(n.beat_hz == doctest::Approx(expect).epsilon(0.15).scale(0.0));
                } else {
                    REQUIRE(n.partial_root > 0);
                    CHECK(n.partial_root <= 16);
                    CHECK(n.partial_voice <= 16);
                    CHECK(static_cast<double>(n.partial_root) * root <= 4000.0);
                    CHECK(n.beat_hz ==
                          doctest::Approx(std::fabs(n.partial_voice * n.centre_f0_hz - n.partial_root * root))
                              .epsilon(1e-9));
                }
            }
        }
    }
}

TEST_CASE("per-target summary: '10/7 averages 6 cents flat'") {
    // The five targets the voice holds (10/7 - 6 cents would be nearer 729/512 in the full set).
    const TargetSet set = target_set({"7/5", "10/7", "11/8", "45/32", "16/11"});
    const auto notes =
        take_notes(110.0, {{10.0 / 7.0, -5.0}, {10.0 / 7.0, -6.0}, {10.0 / 7.0, -7.0}, {7.0 / 5.0, 2.0}}, 4);
    const auto frames = frames_of(notes, notes.back().end_s + 0.3, 0.005, 0.3, 5);
    SegmentConfig cfg;
    cfg.root_hz = 110.0;
    const auto found = segment(frames, cfg, set);
    REQUIRE(found.size() == 4);
    NoteSummary summary(set);
    for (const NoteResult& n : found) summary.add(n);
    const auto rows = summary.rows();
    REQUIRE(rows.size() == 2);
    CHECK(rows[0].target_index == index_of(set, "7/5"));  // set order
    CHECK(rows[1].target_index == index_of(set, "10/7"));
    CHECK(rows[1].count == 3);
    CHECK(std::fabs(rows[1].mean_dev_cents + 6.0) < 0.5);
    CHECK(rows[1].spread_cents == doctest::Approx(1.0).epsilon(0.5));  // sample s.d. of -5, -6, -7 is 1
    CHECK(
        beatless::ui::summary_words(rows[1], "10/7", false).rfind("10/7 averages 6 cents flat (3 notes, spread 1", 0) ==
        0);
    CHECK(beatless::ui::summary_words(rows[1], "10/7", true)
              .rfind("10/7 averages 6 cents narrow (3 intervals, spread 1", 0) == 0);
    CHECK(beatless::ui::summary_words(rows[0], "7/5", false).find("sharp (1 note)") != std::string::npos);
}

TEST_CASE("the summary keeps a target's octaves apart: 5/4 and 5/4 an octave up (5/2) are two rows") {
    // Ratio arithmetic (common practice): 5/4 x 2/1 = 5/2, an octave above the major third. A note matched at the
    // octave above is judged against 5/2, so its row must not average with those matched at 5/4.
    const TargetSet set = target_set({"5/4", "3/2"});
    const int third = index_of(set, "5/4");
    NoteSummary summary(set);
    summary.add(third, 1, -4.0);  // an octave up, 4 c narrow of 5/2
    summary.add(third, 0, 6.0);
    summary.add(third, 0, 8.0);
    summary.add(third, 1, -6.0);
    summary.add(-1, 0, 30.0);  // between targets: no row
    const auto rows = summary.rows();
    REQUIRE(rows.size() == 2);
    CHECK(rows[0].target_index == third);
    CHECK(rows[0].target_octaves == 0);  // the lower octave first
    CHECK(rows[0].count == 2);
    CHECK(rows[0].mean_dev_cents == doctest::Approx(7.0));  // mean of 6 and 8
    CHECK(rows[1].target_index == third);
    CHECK(rows[1].target_octaves == 1);
    CHECK(rows[1].count == 2);
    CHECK(rows[1].mean_dev_cents == doctest::Approx(-5.0));          // mean of -4 and -6
    CHECK(rows[1].spread_cents == doctest::Approx(std::sqrt(2.0)));  // sample s.d. of -4, -6: sqrt(2)
    // Named as the notes' lines name them: a note keeps the set's ratio and says the octave, an interval is 5/2.
    CHECK(beatless::ui::target_words_at(set, third, 1, false) == "5/4 +1oct");
    CHECK(beatless::ui::target_words_at(set, third, 1, true) == "5/2");
    CHECK(beatless::ui::target_words_at(set, third, -1, true) == "5/8");  // 5/4 x 1/2
    CHECK(beatless::ui::target_words_at(set, third, 0, false) == "5/4");
}

TEST_CASE("legato steps split; short dropouts are bridged; blips are dropped") {
    const TargetSet set = tritone_set();
    std::vector<Note> notes(2);
    notes[0].start_s = 0.2;
    notes[0].end_s = 1.6;
    notes[0].centre_hz = 220.0 * 7.0 / 5.0;
    notes[0].vib_rate_hz = 5.5;
    notes[0].vib_depth_cents = 30.0;
    notes[1] = notes[0];
    notes[1].start_s = 1.6;  // no rest: a legato step of 66 cents up to 16/11
    notes[1].end_s = 3.0;
    notes[1].centre_hz = 220.0 * 16.0 / 11.0;
    auto frames = frames_of(notes, 3.3, 0.005, 0.3, 8);
    // A 20 ms dropout inside the first note, and a 50 ms blip after the end.
    for (auto& f : frames) {
        if (f.t_s > 0.8 && f.t_s < 0.82) f.f0_hz = 0.0;
        if (f.t_s > 3.15 && f.t_s < 3.2) f.f0_hz = 300.0, f.confidence = 0.9;
    }
    SegmentConfig cfg;
    cfg.root_hz = 220.0;
    NoteSegmenter* seg = nullptr;
    const auto found = segment(frames, cfg, set, &seg);
    REQUIRE(found.size() == 2);
    CHECK(found[0].target_index == index_of(set, "7/5"));
    CHECK(found[1].target_index == index_of(set, "16/11"));
    CHECK(std::fabs(found[0].dev_cents) < 1.0);
    CHECK(std::fabs(found[1].dev_cents) < 1.0);
    CHECK(std::fabs(found[0].end_s - 1.6) < 0.15);
    CHECK(std::fabs(found[1].start_s - 1.6) < 0.15);
    CHECK(seg->short_notes_dropped() == 1);
}

TEST_CASE("a note without vibrato, a scoop and the settle time") {
    const TargetSet set = tritone_set();
    Note n;
    n.start_s = 0.1;
    n.end_s = 2.1;
    n.centre_hz = 200.0 * 11.0 / 8.0 * std::exp2(-4.0 / 1200.0);
    n.scoop_cents = -60.0;  // starts 60 cents flat, decays with tau = 0.1 s
    n.scoop_tau_s = 0.1;
    const auto frames = frames_of({n}, 2.3, 0.005, 0.2, 3);
    SegmentConfig cfg;
    cfg.root_hz = 200.0;
    const auto found = segment(frames, cfg, set);
    REQUIRE(found.size() == 1);
    CHECK_FALSE(found[0].vibrato);
    CHECK(found[0].target_index == index_of(set, "11/8"));
    CHECK(std::fabs(found[0].dev_cents + 4.0) < 0.5);
    // The scoop is within 5 cents after tau * ln(60/5) = 0.25 s; the averaging
    // window then has to pass it, so the settle time lies between the two.
    CHECK(found[0].settle_s > 0.1);
    CHECK(found[0].settle_s < 0.6);
}

TEST_CASE("no voice, only the drone, long notes and bad settings") {
    const TargetSet set = tritone_set();
    SegmentConfig cfg;
    cfg.root_hz = 110.0;
    // Silence: no notes.
    std::vector<PitchFrame> silent(1000);
    for (std::size_t i = 0; i < silent.size(); ++i) silent[i].t_s = 0.005 * i;
    CHECK(segment(silent, cfg, set).empty());
    // Only the drone in the tracker: skipped, no notes.
    auto drone = silent;
    for (auto& f : drone) f.f0_hz = 220.0, f.confidence = 0.9;
    NoteSegmenter* seg = nullptr;
    CHECK(segment(drone, cfg, set, &seg).empty());
    CHECK(seg->drone_frames() == drone.size());
    // Nothing at all.
    CHECK(segment({}, cfg, set).empty());
    // A 25 s note with a 10 s cap: closed at the cap, marked truncated.
    Note n;
    n.start_s = 0.0;
    n.end_s = 25.0;
    n.centre_hz = 110.0 * 1.5;
    cfg.max_note_s = 10.0;
    const auto parts = segment(frames_of({n}, 25.0, 0.005, 0.3, 1), cfg, set);
    REQUIRE(parts.size() == 3);
    CHECK(parts[0].truncated);
    CHECK(parts[1].truncated);
    CHECK_FALSE(parts[2].truncated);
    // Bad settings.
    cfg = {};
    CHECK_THROWS_AS(NoteSegmenter(cfg, set), Error);  // no root
    cfg.root_hz = 110.0;
    CHECK_THROWS_AS(NoteSegmenter(cfg, TargetSet{}), Error);
    cfg.root_hz = -3.0;
    CHECK(error_of<Error>([&] { NoteSegmenter s(cfg, set); }).find("root") != std::string::npos);
}

namespace {
// 7/5 over 220 Hz from 0.2 to 2.2 s with a vibrato.
Note vibrato_7_5(double rate_hz, double depth_cents) {
    Note n;
    n.start_s = 0.2;
    n.end_s = 2.2;
    n.centre_hz = 220.0 * 7.0 / 5.0;
    n.vib_rate_hz = rate_hz;
    n.vib_depth_cents = depth_cents;
    return n;
}
}  // namespace

TEST_CASE("a tracker slip after a dropout is a dropout; a real leap starts the next note where it happens") {
    // 7/5 over 220 Hz with a 30 c vibrato; 1.0 s in, 30 ms of nothing, then 60 ms an octave low (a tracker slip in
    // noise), then the note again. Before, the slip after a dropout longer than max_gap_s (40 ms) ended the note and
    // began another: one note sung, two reported. The slip is held aside and dropped when the pitch comes back.
    const TargetSet set = tritone_set();
    Note n = vibrato_7_5(5.5, 30.0);
    auto frames = frames_of({n}, 2.4, 0.005, 0.3, 9);
    for (auto& f : frames) {
        if (f.t_s > 1.0 && f.t_s < 1.03) f.f0_hz = 0.0;
        if (f.t_s >= 1.03 && f.t_s < 1.09) f.f0_hz *= 0.5;
    }
    SegmentConfig cfg;
    cfg.root_hz = 220.0;
    const auto one = segment(frames, cfg, set);
    REQUIRE(one.size() == 1);
    CHECK(std::fabs(one[0].dev_cents) < 1.0);

    // A leap of a fifth (702 c, past outlier_cents) with no rest: the next note starts at the leap, within two hops,
    // not when the first note's frames had been missing for max_gap_s.
    Note m = n;
    n.end_s = 1.2;
    m.start_s = 1.2;
    m.centre_hz = n.centre_hz * 1.5;
    const auto two = segment(frames_of({n, m}, 2.4, 0.005, 0.3, 10), cfg, set);
    REQUIRE(two.size() == 2);
    CHECK(std::fabs(two[0].end_s - 1.2) < 0.01);
    CHECK(std::fabs(two[1].start_s - 1.2) < 0.01);
}

TEST_CASE("a dropout in a vibrato note: bridged when the pitch comes back within its swing; a piece cut off says so") {
    // 7/5 over 220 Hz, 4 Hz vibrato of +-60 c with its trough 0.08 s after the onset (sine in cents, common practice).
    // The first 0.16 s are heard (the trough, -60 .. +25 c), then 80 ms drop out and the pitch comes back at +38 c,
    // 70 c from the piece's median: past change_cents (40 c), but within it plus half the swing the piece heard. One
    // note, read within 1 c (before, the dropout cut it into a 0.16 s piece reading 5 c off and the rest).
    const TargetSet set = tritone_set();
    Note n = vibrato_7_5(4.0, 60.0);
    n.vib_phase = 1.5 * M_PI - 2.0 * M_PI * 4.0 * 0.08;
    SegmentConfig cfg;
    cfg.root_hz = 220.0;
    auto frames = frames_of({n}, 2.4, 0.005, 0.3, 11);
    for (auto& f : frames)
        if (f.t_s > 0.36 && f.t_s < 0.44) f.f0_hz = 0.0;
    const auto one = segment(frames, cfg, set);
    REQUIRE(one.size() == 1);
    CHECK(std::fabs(one[0].start_s - 0.2) < 0.01);
    CHECK(one[0].vibrato);
    CHECK(std::fabs(one[0].dev_cents) < 1.0);

    // After the dropout the pitch comes back past the swing allowed (a 140 ms octave slip, 1200 c off, is the next
    // note's start when it holds): the piece before is closed there. Its mean is of part of a cycle, off the
    // vibrato's centre (the truth) by more than 5 c; it must not pass for a measurement: dropout_bias_cents (as far
    // as the farthest pitch the piece heard) is larger than that error, and the rest of the note reads within 1 c.
    frames = frames_of({n}, 2.4, 0.005, 0.3, 11);
    for (auto& f : frames) {
        if (f.t_s > 0.36 && f.t_s < 0.44) f.f0_hz = 0.0;
        if (f.t_s >= 0.44 && f.t_s < 0.58) f.f0_hz *= 0.5;
    }
    const auto found = segment(frames, cfg, set);
    REQUIRE(found.size() == 2);  // the slip, 140 ms, is shorter than a note
    CHECK(found[0].end_s < 0.37);
    const double error = std::fabs(found[0].cents_above_root - 1200.0 * std::log2(7.0 / 5.0));
    CHECK(error > 5.0);
    CHECK(found[0].dropout_bias_cents > error);
    CHECK(found.back().vibrato);
    CHECK(std::fabs(found.back().dev_cents) < 1.0);
    CHECK(std::fabs(found.back().dropout_bias_cents) < 1.0);
}

TEST_CASE("a dropout through which the level holds is bridged up to hold_s; a rest, where it falls, is not") {
    // 7/5 over 220 Hz with a 30 c vibrato, levels as a tracker reports them in noise as loud as the voice: -9 dBFS
    // while the voice sounds, -12 dBFS (3 dB down: the voice's half of the power gone) in a rest.
    const TargetSet set = tritone_set();
    SegmentConfig cfg;
    cfg.root_hz = 220.0;
    Note n = vibrato_7_5(5.5, 30.0);
    auto frames = frames_of({n}, 2.4, 0.005, 0.3, 12);
    // The pitch lost for 250 ms in the middle (past bridge_s, within hold_s) while the sound goes on.
    for (auto& f : frames) {
        f.level_dbfs = f.voiced() ? -9.0 : -12.0;
        if (f.t_s > 1.0 && f.t_s < 1.25) {
            f.f0_hz = 0.0;
            f.level_dbfs = -9.5;
        }
    }
    const auto one = segment(frames, cfg, set);
    REQUIRE(one.size() == 1);
    CHECK(std::fabs(one[0].dev_cents) < 1.0);
    CHECK(one[0].heard_share == doctest::Approx(1.95 / 2.2).epsilon(0.02));

    // The same 250 ms as a rest between two notes of the same pitch: the level falls 3 dB, two notes.
    for (auto& f : frames)
        if (f.t_s > 1.0 && f.t_s < 1.25) f.level_dbfs = -12.0;
    const auto two = segment(frames, cfg, set);
    REQUIRE(two.size() == 2);
    CHECK(std::fabs(two[0].end_s - 1.0) < 0.01);
    CHECK(std::fabs(two[1].start_s - 1.25) < 0.01);
    // And past hold_s (400 ms) even with the level held: two notes.
    for (auto& f : frames)
        if (f.t_s > 1.0 && f.t_s < 1.4) {
            f.f0_hz = 0.0;
            f.level_dbfs = -9.5;
        }
    CHECK(segment(frames, cfg, set).size() == 2);
}
