// "Allocates: no" checked: the review analyzers allocate nothing per frame
// once they are set up (DESIGN.md, real-time rules). This test binary
// replaces the global operator new with a counting one (the standard lets
// a program do so, [replacement.functions]) and counts the allocations made
// while samples and frames are pushed and pulled.
#include "pitch/dsp/drone_comb.h"
#include "pitch/dsp/vibrato.h"
#include "pitch/measure/decimated_trace.h"
#include "pitch/measure/dyad_segment.h"
#include "pitch/measure/root_detect.h"
#include "pitch/measure/segment.h"
#include "pitch/measure/two_voice.h"
#include "tests/mix_signals.h"

#include <doctest/doctest.h>

#include <atomic>
#include <cstdlib>
#include <new>

namespace {
std::atomic<long> g_allocations{0};
}

void* operator new(std::size_t n) {
    ++g_allocations;
    if (void* p = std::malloc(n ? n : 1)) return p;
    throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }

using namespace beatless;
using namespace beatless::pitch;
using namespace beatless::testsig;

namespace {
constexpr double kFs = 44100.0;
}

TEST_CASE("two voices: push and pull allocate nothing") {
    std::vector<float> x(static_cast<std::size_t>(3 * kFs), 0.0f);
    add_tone(x, kFs, 196.0, 0.0, 3.0, 0.2, rolloff(12));
    add_tone(x, kFs, 196.0 * 1.5 * std::exp2(4.0 / 1200.0), 0.0, 3.0, 0.2, rolloff(12));
    TwoVoiceTracker tv({}, target_set({"5/4", "4/3", "3/2", "600c"}));
    TwoVoiceFrame f;
    int frames = 0, with_beat = 0;
    const long before = g_allocations.load();
    for (std::size_t i = 0; i < x.size(); i += 1000) {
        tv.push(std::span<const float>(x.data() + i, std::min<std::size_t>(1000, x.size() - i)));
        while (tv.pull(f)) {
            ++frames;
            if (f.beat_source == BeatSource::envelope) ++with_beat;
        }
    }
    CHECK(g_allocations.load() - before == 0);
    CHECK(frames > 250);
    CHECK(with_beat > 0);  // the envelope path ran too
}

TEST_CASE("root detection: push and estimate allocate nothing") {
    const Take take = drone_and_voice(kFs, 110.0, tritone_notes(), 2);
    RootDetector rd(RootDetectConfig{});
    const long before = g_allocations.load();
    rd.push(take.samples);
    const RootEstimate e = rd.estimate();
    CHECK(g_allocations.load() - before == 0);
    CHECK(e.found());
}

TEST_CASE("vibrato centre and note segmentation: push allocates nothing") {
    const auto notes = take_notes(110.0, tritone_notes(), 3);
    const auto frames = frames_of(notes, notes.back().end_s + 0.3, 0.005, 0.3, 4, 110.0);
    SegmentConfig cfg;
    cfg.root_hz = 110.0;
    NoteSegmenter seg(cfg, tritone_set());
    VibratoCentre vc;
    NoteResult r;
    int found = 0;
    const long before = g_allocations.load();
    for (const PitchFrame& f : frames) {
        vc.push_hz(f.t_s, f.f0_hz);
        if (seg.push(f, r)) ++found;
    }
    if (seg.finish(r)) ++found;
    CHECK(g_allocations.load() - before == 0);
    CHECK(found == 5);
}

TEST_CASE("drone comb, dyad segmentation and the decimated trace: allocate nothing per block or frame") {
    std::vector<float> x(static_cast<std::size_t>(4 * kFs), 0.0f);
    add_tone(x, kFs, 180.0, 0.0, 4.0, 0.2, rolloff(10));
    add_tone(x, kFs, 240.0 * std::exp2(5.0 / 1200.0), 0.0, 4.0, 0.2, rolloff(10));
    const TargetSet set = target_set({"5/4", "4/3", "3/2"});
    DroneComb comb({.sample_rate_hz = kFs, .root_hz = 110.0});
    TwoVoiceTracker tv({}, set);
    DyadSegmentConfig dc;
    dc.hop_s = static_cast<double>(tv.hop_len_samples()) / kFs;
    DyadSegmenter seg(dc, set);
    DecimatedTrace trace({.bucket_s = 0.01, .max_points = 64});  // small: it merges during the run
    std::vector<float> y(1000);
    TwoVoiceFrame f;
    DyadResult d;
    int dyads = 0;
    const long before = g_allocations.load();
    for (std::size_t i = 0; i < x.size(); i += 1000) {
        const std::size_t n = std::min<std::size_t>(1000, x.size() - i);
        comb.process(std::span<const float>(x.data() + i, n), std::span<float>(y.data(), n));
        tv.push(std::span<const float>(x.data() + i, n));
        while (tv.pull(f)) {
            trace.push(f.t_s, f.interval_cents, f.voices == 2);
            if (seg.push(f, d)) ++dyads;
        }
    }
    if (seg.finish(d)) ++dyads;
    CHECK(g_allocations.load() - before == 0);
    CHECK(dyads == 1);
    CHECK(trace.bucket_s() > 0.05);
}
