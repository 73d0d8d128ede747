// DyadSegmenter on two-voice frames with exactly known content: frames made
// by hand (cuts, gaps, beats) and frames of the real two-voice tracker
// (pitch/measure/two_voice.h) on mixtures of two harmonic tones.
//
// Sources: the bars (interval deviation within 1 cent; measured beat rate
// within 10 % or 0.2 Hz of the predicted |q f_high - p f_low|) are the review
// issue's; the beat of the coinciding pair of p/q mistuned by d cents is
// p * f_low * |2^(d/1200) - 1| (Helmholtz, On the Sensations of Tone, ch.
// VIII; pitch/theory/beats.h beat_rate_at); cents by Ellis (1885).
#include "pitch/base/error.h"
#include "pitch/measure/dyad_segment.h"
#include "pitch/theory/beats.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <cmath>
#include <vector>

using namespace beatless;
using namespace beatless::pitch;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;

TargetSet duo_set() { return target_set({"6/5", "5/4", "4/3", "7/5", "3/2", "8/5", "5/3", "7/4"}); }

int index_of(const TargetSet& set, const char* text) {
    for (std::size_t i = 0; i < set.targets.size(); ++i)
        if (set.targets[i].interval.str() == text) return static_cast<int>(i);
    return -1;
}

TwoVoiceFrame frame(double t, double lo, double hi, BeatSource src = BeatSource::none, double beat = NAN) {
    TwoVoiceFrame f;
    f.t_s = t;
    f.voices = 2;
    f.f_low_hz = lo;
    f.f_high_hz = hi;
    f.confidence = 0.9;
    f.interval_cents = 1200.0 * std::log2(hi / lo);
    f.beat_source = src;
    f.measured_beat_hz = beat;
    return f;
}

std::vector<DyadResult> segment(const std::vector<TwoVoiceFrame>& frames, const TargetSet& set,
                                std::size_t* dropped = nullptr, DyadSegmentConfig cfg = {}) {
    DyadSegmenter seg(cfg, set);
    std::vector<DyadResult> out;
    DyadResult r;
    for (const auto& f : frames)
        if (seg.push(f, r)) out.push_back(r);
    if (seg.finish(r)) out.push_back(r);
    if (dropped) *dropped = seg.short_dyads_dropped();
    return out;
}
}  // namespace

TEST_CASE("hand-made frames: a legato step splits, a short gap is bridged, a blip is dropped") {
    const TargetSet set = duo_set();
    std::vector<TwoVoiceFrame> fr;
    const double lo = 200.0;
    // 0-2 s: a major third 4 cents wide; 2-4 s (no gap): the upper voice steps up to a fourth, 3 cents narrow.
    for (int k = 0; k < 400; ++k) {
        const double t = 0.01 * k;
        if (t > 1.0 && t < 1.03) continue;  // a 30 ms dropout inside the third
        const double hi = t < 2.0 ? lo * 1.25 * std::exp2(4.0 / 1200.0) : lo * 4.0 / 3.0 * std::exp2(-3.0 / 1200.0);
        fr.push_back(frame(t, lo, hi, BeatSource::envelope, t < 2.0 ? 1.0 + 0.001 * k : 2.0));
    }
    // A 0.1 s blip after a 0.5 s rest.
    for (int k = 0; k < 10; ++k) fr.push_back(frame(4.5 + 0.01 * k, 300.0, 450.0));
    std::size_t dropped = 0;
    const auto d = segment(fr, set, &dropped);
    REQUIRE(d.size() == 2);
    CHECK(dropped == 1);
    CHECK(d[0].target_index == index_of(set, "5/4"));
    CHECK(d[1].target_index == index_of(set, "4/3"));
    CHECK(d[0].dev_cents == doctest::Approx(4.0).epsilon(1e-6));
    CHECK(d[1].dev_cents == doctest::Approx(-3.0).epsilon(1e-6));
    CHECK(d[0].spread_cents < 1e-6);
    CHECK(d[0].start_s == doctest::Approx(0.0));
    CHECK(std::fabs(d[0].end_s - 2.0) < 0.1);
    CHECK(std::fabs(d[1].start_s - 2.0) < 0.1);
    CHECK(d[1].end_s == doctest::Approx(3.99));
    CHECK(d[0].f_low_hz == doctest::Approx(lo));
    // The envelope measurement with the longest history: the last measured frame inside the edges.
    CHECK(d[0].beat_source == BeatSource::envelope);
    CHECK(d[0].measured_beat_hz > 1.1);
    CHECK(d[0].measured_beat_hz < 1.2);
    CHECK(d[1].measured_beat_hz == doctest::Approx(2.0));
    // Predicted: 5 f_low against 4 f_high (Helmholtz), from an independent closed form.
    CHECK(d[0].partial_low == 5);
    CHECK(d[0].partial_high == 4);
    CHECK(d[0].predicted_beat_hz == doctest::Approx(beat_rate_at(lo, Ratio{5, 4}, 4.0)).epsilon(1e-9));
    CHECK(d[1].predicted_beat_hz == doctest::Approx(beat_rate_at(lo, Ratio{4, 3}, -3.0)).epsilon(1e-9));
}

TEST_CASE("frequency-difference beats: the median of the dyad's measurements") {
    const TargetSet set = duo_set();
    std::vector<TwoVoiceFrame> fr;
    const double beats[] = {9.0, 10.0, 10.5, 10.0, 30.0};  // one outlier
    for (int k = 0; k < 100; ++k)
        fr.push_back(
            frame(0.01 * k, 180.0, 270.0 * std::exp2(12.0 / 1200.0), BeatSource::frequency_difference, beats[k % 5]));
    const auto d = segment(fr, set);
    REQUIRE(d.size() == 1);
    CHECK(d[0].beat_source == BeatSource::frequency_difference);
    CHECK(d[0].measured_beat_hz == doctest::Approx(10.0));
    CHECK(d[0].target_index == index_of(set, "3/2"));
    // Frames with one voice, or too weak, are gaps; a gap over 50 ms ends the dyad.
    std::vector<TwoVoiceFrame> g = fr;
    for (auto& f : g)
        if (f.t_s > 0.5 && f.t_s < 0.58) f.voices = 1;
    CHECK(segment(g, set).size() == 2);
    for (auto& f : g)
        if (f.t_s > 0.5 && f.t_s < 0.58) f.voices = 2, f.confidence = 0.1;
    CHECK(segment(g, set).size() == 2);
}

TEST_CASE("the real two-voice tracker: held double stops at and off just ratios, equal and unequal loudness") {
    const TargetSet set = duo_set();
    std::vector<HeldDyad> truth = {{3, 2, 0, 0.2, 0.2, 196},  {5, 4, 3, 0.2, 0.1, 220},   {7, 4, -7, 0.1, 0.2, 150},
                                   {6, 5, 12, 0.2, 0.2, 247}, {4, 3, -3, 0.2, 0.05, 180}, {7, 5, -12, 0.15, 0.15, 200},
                                   {5, 3, 7, 0.2, 0.07, 160}, {8, 5, -7, 0.07, 0.2, 190}};
    const double note = 2.5;
    const auto x = held_dyads(kFs, truth, note, 0.3, 1e-3, 5);
    TwoVoiceTracker tv({}, set);
    DyadSegmentConfig cfg;
    cfg.hop_s = static_cast<double>(tv.hop_len_samples()) / kFs;
    cfg.edge_s = 0.5 * static_cast<double>(tv.window_len_samples()) / kFs;
    DyadSegmenter seg(cfg, set);
    std::vector<DyadResult> found;
    TwoVoiceFrame f;
    DyadResult r;
    for (std::size_t i = 0; i < x.size(); i += 4096) {
        tv.push(std::span<const float>(x.data() + i, std::min<std::size_t>(4096, x.size() - i)));
        while (tv.pull(f))
            if (seg.push(f, r)) found.push_back(r);
    }
    if (seg.finish(r)) found.push_back(r);
    REQUIRE(found.size() == 8);
    for (std::size_t i = 0; i < 8; ++i) {
        const HeldDyad& d = truth[i];
        const DyadResult& y = found[i];
        CAPTURE(i);
        const Ratio ratio{d.p, d.q};
        CHECK(y.target_index == index_of(set, ratio.str().c_str()));
        CHECK(std::fabs(y.dev_cents - d.off_cents) < 1.0);
        CHECK(std::fabs(1200.0 * std::log2(y.f_low_hz / d.f_low_hz)) < 1.0);
        CHECK(std::fabs(y.start_s - d.start_s) < 0.15);
        CHECK(std::fabs(y.end_s - (d.start_s + note)) < 0.15);
        const double beat = std::fabs(d.q * d.f_high_hz() - d.p * d.f_low_hz);
        CHECK(beat == doctest::Approx(beat_rate_at(d.f_low_hz, ratio, d.off_cents)).epsilon(1e-9).scale(1e-12));
        CHECK(std::fabs(y.predicted_beat_hz - beat) <= std::max(0.02 * beat, 0.02));
        if (d.off_cents != 0.0) {
            CAPTURE(y.measured_beat_hz);
            CHECK(std::fabs(y.measured_beat_hz - beat) <= std::max(0.1 * beat, 0.2));
        }
    }
}

TEST_CASE("bad settings and an empty set throw") {
    CHECK(error_of<Error>([] {
              DyadSegmenter({}, TargetSet{"none", "", "", {}});
          }) == "dyad segmentation: the target set 'none' is empty");
    DyadSegmentConfig c;
    c.hop_s = 0.0;
    CHECK(error_of<Error>([&] { DyadSegmenter(c, duo_set()); }) == "dyad segmentation: hop_s 0 is out of range");
}
