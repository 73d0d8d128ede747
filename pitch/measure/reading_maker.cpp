#include "pitch/measure/reading_maker.h"

#include "pitch/base/error.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/notes.h"

#include <algorithm>
#include <cmath>
#include <string>

namespace beatless::pitch {

bool coinciding_partials(const Interval& t, int octaves, std::int64_t& p, std::int64_t& q) noexcept {
    const Ratio r = t.is_ratio() ? t.ratio() : nearest_simple_ratio(t.cents());
    p = r.num;
    q = r.den;
    return shift_by_octaves(p, q, octaves);
}

ReadingMaker::ReadingMaker(const ReadingConfig& config, TargetSet targets)
    : cfg_(config), set_(std::move(targets)), vibrato_(config.vibrato) {
    if (set_.targets.empty()) throw Error("target set '" + set_.id + "': has no targets");
    if (!(cfg_.root_hz >= 1.0 && cfg_.root_hz <= 20000.0))
        throw Error("root " + std::to_string(cfg_.root_hz) + " Hz: out of range (1 Hz to 20 kHz)");
    check_a4(cfg_.a4_hz);
    // nearest_simple_ratio for cents targets is a search: do it once here.
    for (const Target& t : set_.targets) {
        BeatRatio b;
        coinciding_partials(t.interval, 0, b.p, b.q);
        b.exact = t.interval.is_ratio();
        beat_.push_back(b);
    }
}

void ReadingMaker::set_root_hz(double root_hz) noexcept {
    if (!(root_hz >= 1.0 && root_hz <= 20000.0)) return;
    cfg_.root_hz = root_hz;
    reset();
}

void ReadingMaker::reset() noexcept {
    vibrato_.reset();
    prev_cents_ = NAN;
    far_frames_ = 0;
}

Reading ReadingMaker::make(const PitchFrame& f, std::int64_t sample_index) noexcept {
    Reading r;
    r.t_s = f.t_s;
    r.confidence = f.confidence;
    r.root_hz = cfg_.root_hz;
    r.sample_index = sample_index;
    r.level_dbfs = f.level_dbfs;
    if (!(f.voiced() && std::isfinite(f.f0_hz))) {
        vibrato_.push(f.t_s, 0.0, false);
        return r;
    }
    r.f0_hz = f.f0_hz;
    r.ratio = f.f0_hz / cfg_.root_hz;
    const double cents = 1200.0 * std::log2(r.ratio);
    r.cents_above_root = cents;
    // A new note: a jump between frames, or the pitch held away from the
    // centre by more than the vibrato explains for new_note_frames frames.
    const VibratoReading& before = vibrato_.reading();
    if (std::isfinite(prev_cents_) && std::fabs(cents - prev_cents_) > cfg_.jump_cents) {
        vibrato_.reset();
        far_frames_ = 0;
        ++notes_;
    } else if (before.ready) {
        const double allowed =
            cfg_.new_note_cents + (before.vibrato ? 1.2 * before.depth_cents : 3.0 * before.spread_cents);
        far_frames_ = std::fabs(cents - before.centre_cents) > std::min(allowed, cfg_.jump_cents) ? far_frames_ + 1 : 0;
        if (far_frames_ >= cfg_.new_note_frames) {
            vibrato_.reset();
            far_frames_ = 0;
            ++notes_;
        }
    }
    prev_cents_ = cents;

    const VibratoReading& v = vibrato_.push(f.t_s, cents, true);
    const double choose_by = v.ready ? v.centre_cents : cents;
    const TargetMatch m = nearest_target(set_, choose_by, cfg_.octave_equivalent);
    r.target_index = static_cast<int>(m.index);
    r.target_octaves = m.octaves;
    r.target_cents = m.target_cents;
    r.dev_cents = cents - m.target_cents;
    if (v.ready) {
        r.centre_f0_hz = cfg_.root_hz * std::exp2(v.centre_cents / 1200.0);
        r.centre_dev_cents = v.centre_cents - m.target_cents;
        r.steadiness_cents = v.spread_cents;
    }

    // Coinciding pair of the matched target in the matched octave.
    std::int64_t p = beat_[m.index].p, q = beat_[m.index].q;
    const bool ok = shift_by_octaves(p, q, m.octaves);
    if (ok) {
        r.beat_partial_root = static_cast<int>(std::min<std::int64_t>(p, 1 << 30));
        r.beat_partial_voice = static_cast<int>(std::min<std::int64_t>(q, 1 << 30));
        r.beat_hz = std::fabs(static_cast<double>(q) * f.f0_hz - static_cast<double>(p) * cfg_.root_hz);
    }
    // The pair a listener hears (pitch/theory/beats.h, audible_pair).
    std::optional<Ratio> own;
    if (ok && beat_[m.index].exact) own = Ratio{p, q};
    const AudiblePair heard = audible_pair(cfg_.root_hz, f.f0_hz, m.target_cents, own, cfg_.audible);
    if (heard.found) {
        r.heard_partial_root = heard.partial_a;
        r.heard_partial_voice = heard.partial_b;
        r.heard_beat_hz = heard.beat_hz;
        r.heard_beat_at_target_hz = heard.beat_at_target_hz;
    }
    const double midi = 69.0 + 12.0 * std::log2(f.f0_hz / cfg_.a4_hz);
    r.et_offset_cents = 100.0 * (midi - std::round(midi));
    return r;
}

}  // namespace beatless::pitch
