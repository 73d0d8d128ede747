// DyadSegmenter — the method in detail (summary in dyad_segment.h).
//
// Steps: (1) a frame with two voices and confidence >= min_confidence joins
// the open dyad; any other frame is a gap, and a gap longer than max_gap_s
// closes it. (2) Each voice's pitch in cents has a trailing mean over
// smooth_s; while both means stay within change_cents of the dyad's level
// (the mean of its frames so far, departures left out) the dyad holds; when either leaves for
// change_s, the dyad is cut half a smoothing window before the departure
// began, and the frames after the cut start the next one. (3) Dyads shorter
// than min_dyad_s are dropped. (4) The measurement uses the frames at least
// edge_s inside both ends (the middle half when that leaves too few): the
// mean of each voice in cents, the interval (their difference, so the
// interval's mean and the f0s agree exactly), its standard deviation, the
// nearest target (pitch/theory/targets.h) and the coinciding pair p/q of its ratio
// (pitch/theory/beats.h beating_ratio). The measured beat is the tracker's latest
// measurement when it came from the envelope (the longest history), else the
// median of the frequency-difference measurements. Allocation in the
// constructor only.
#include "pitch/measure/dyad_segment.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/whole_cycles.h"
#include "pitch/theory/beats.h"

#include <algorithm>
#include <cstring>
#include <string>

namespace beatless::pitch {

namespace {
void check(bool ok, const char* what, double v) {
    if (!ok) throw Error("dyad segmentation: " + std::string(what) + " " + format_trimmed(v, 6) + " is out of range");
}

double cents_of(double hz) { return 1200.0 * std::log2(hz); }
}  // namespace

DyadSegmenter::DyadSegmenter(const DyadSegmentConfig& config, const TargetSet& targets)
    : cfg_(config), targets_(targets) {
    if (targets_.targets.empty()) throw Error("dyad segmentation: the target set '" + targets_.id + "' is empty");
    check(cfg_.hop_s >= 1e-4 && cfg_.hop_s <= 0.1, "hop_s", cfg_.hop_s);
    check(cfg_.min_dyad_s >= 0.0 && cfg_.min_dyad_s <= 10.0, "min_dyad_s", cfg_.min_dyad_s);
    check(cfg_.max_gap_s >= 0.0 && cfg_.max_gap_s <= 1.0, "max_gap_s", cfg_.max_gap_s);
    check(cfg_.change_cents > 0.0, "change_cents", cfg_.change_cents);
    check(cfg_.change_s >= 0.0 && cfg_.change_s <= 2.0, "change_s", cfg_.change_s);
    check(cfg_.smooth_s >= cfg_.hop_s && cfg_.smooth_s <= 2.0, "smooth_s", cfg_.smooth_s);
    check(cfg_.edge_s >= 0.0 && cfg_.edge_s <= 1.0, "edge_s", cfg_.edge_s);
    check(cfg_.max_dyad_s >= 1.0 && cfg_.max_dyad_s <= 600.0, "max_dyad_s", cfg_.max_dyad_s);
    cap_ = static_cast<std::size_t>(std::ceil(cfg_.max_dyad_s / cfg_.hop_s)) + 1;
    for (auto* v : {&t_, &lo_, &hi_, &beat_, &scratch_}) v->assign(cap_, 0.0);
    src_.assign(cap_, 0);
    clip_.assign(cap_, 0);
    smooth_n_ = std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(cfg_.smooth_s / cfg_.hop_s)));
}

void DyadSegmenter::add_frame(const TwoVoiceFrame& f) noexcept {
    t_[n_] = f.t_s;
    lo_[n_] = cents_of(f.f_low_hz);
    hi_[n_] = cents_of(f.f_high_hz);
    beat_[n_] = f.measured_beat_hz;
    src_[n_] = static_cast<std::uint8_t>(f.beat_source);
    clip_[n_] = f.clipped ? 1 : 0;
    sum_lo_ += lo_[n_];
    sum_hi_ += hi_[n_];
    if (n_ >= smooth_n_) {
        sum_lo_ -= lo_[n_ - smooth_n_];
        sum_hi_ -= hi_[n_ - smooth_n_];
    }
    ++n_;
    last_t_ = f.t_s;
}

void DyadSegmenter::start_with(std::size_t from) noexcept {
    const std::size_t keep = n_ - from;
    for (auto* v : {&t_, &lo_, &hi_, &beat_}) std::memmove(v->data(), v->data() + from, keep * sizeof(double));
    std::memmove(src_.data(), src_.data() + from, keep);
    std::memmove(clip_.data(), clip_.data() + from, keep);
    n_ = keep;
    sum_lo_ = sum_hi_ = 0.0;
    for (std::size_t i = keep > smooth_n_ ? keep - smooth_n_ : 0; i < keep; ++i) {
        sum_lo_ += lo_[i];
        sum_hi_ += hi_[i];
    }
    anchor_lo_ = anchor_hi_ = NAN;
    depart_frames_ = 0;
}

bool DyadSegmenter::push(const TwoVoiceFrame& f, DyadResult& out) noexcept {
    const bool two = f.voices == 2 && f.confidence >= cfg_.min_confidence && std::isfinite(f.t_s) &&
                     std::isfinite(f.f_low_hz) && std::isfinite(f.f_high_hz) && f.f_low_hz > 0.0 && f.f_high_hz > 0.0;
    if (!two) {
        if (n_ > 0 && f.t_s - last_t_ > cfg_.max_gap_s) return close(n_, false, out);
        return false;
    }
    bool emitted = false;
    if (n_ > 0 && f.t_s - last_t_ > cfg_.max_gap_s + 0.5 * cfg_.hop_s)
        emitted = close(n_, false, out);
    else if (n_ == cap_)
        emitted = close(n_, true, out);
    add_frame(f);
    if (emitted || n_ < smooth_n_) return emitted;

    const double s_lo = sum_lo_ / static_cast<double>(smooth_n_), s_hi = sum_hi_ / static_cast<double>(smooth_n_);
    if (std::isnan(anchor_lo_)) {
        level_lo_ = level_hi_ = 0.0;
        for (std::size_t i = 0; i < n_; ++i) {
            level_lo_ += lo_[i];
            level_hi_ += hi_[i];
        }
        level_n_ = n_;
        anchor_lo_ = level_lo_ / static_cast<double>(level_n_);
        anchor_hi_ = level_hi_ / static_cast<double>(level_n_);
        return false;
    }
    if (departed(s_lo, anchor_lo_) || departed(s_hi, anchor_hi_)) {
        if (depart_frames_++ == 0) depart_from_ = n_ - 1;
        if (static_cast<double>(depart_frames_) * cfg_.hop_s >= cfg_.change_s) {
            const std::size_t cut =
                std::max<std::size_t>(1, depart_from_ > smooth_n_ / 2 ? depart_from_ - smooth_n_ / 2 : 1);
            return close(cut, false, out);
        }
    } else {
        depart_frames_ = 0;
        level_lo_ += lo_[n_ - 1];
        level_hi_ += hi_[n_ - 1];
        ++level_n_;
        anchor_lo_ = level_lo_ / static_cast<double>(level_n_);
        anchor_hi_ = level_hi_ / static_cast<double>(level_n_);
    }
    return false;
}

bool DyadSegmenter::finish(DyadResult& out) noexcept {
    if (n_ == 0) return false;
    return close(n_, false, out);
}

bool DyadSegmenter::close(std::size_t m, bool truncated, DyadResult& out) noexcept {
    bool ok = false;
    const double dur = m > 0 ? t_[m - 1] - t_[0] + cfg_.hop_s : 0.0;
    if (m >= 4 && dur >= cfg_.min_dyad_s) {
        ok = true;
        DyadResult r;
        r.start_s = t_[0];
        r.end_s = t_[m - 1];
        r.frames = static_cast<int>(m);
        r.truncated = truncated;
        for (std::size_t i = 0; i < m; ++i) r.clipped_frames += clip_[i];

        // The measured frames: at least edge_s inside both ends.
        std::size_t a = 0, b = m;
        while (a < m && t_[a] < r.start_s + cfg_.edge_s) ++a;
        while (b > a && t_[b - 1] > r.end_s - cfg_.edge_s) --b;
        if (b < a + std::max<std::size_t>(3, m / 4)) {
            a = m / 4;
            b = m - m / 4;
        }
        const std::size_t k = b - a;
        r.measured_frames = static_cast<int>(k);
        double mlo = 0.0, mhi = 0.0, sd = 0.0;
        mean_and_spread(&lo_[a], k, mlo, sd);
        mean_and_spread(&hi_[a], k, mhi, sd);
        for (std::size_t i = a; i < b; ++i) scratch_[i - a] = hi_[i] - lo_[i];
        double miv = 0.0;
        mean_and_spread(scratch_.data(), k, miv, r.spread_cents);
        r.f_low_hz = std::exp2(mlo / 1200.0);
        r.f_high_hz = std::exp2(mhi / 1200.0);
        r.interval_cents = mhi - mlo;

        const TargetMatch tm = nearest_target(targets_, r.interval_cents, cfg_.octave_equivalent);
        r.target_index = static_cast<int>(tm.index);
        r.target_octaves = tm.octaves;
        r.target_cents = tm.target_cents;
        r.dev_cents = tm.dev_cents;
        const Ratio br = beating_ratio(targets_.targets[tm.index].interval, tm.octaves);
        r.ratio_num = br.num;
        r.ratio_den = br.den;
        // The pair a listener hears (pitch/theory/beats.h): f_high / f_low = p/q, the p-th
        // partial of the low voice meets the q-th of the high one, or a simpler ratio's pair.
        const AudiblePair h = audible_pair_of_target(r.f_low_hz, r.f_high_hz, targets_.targets[tm.index].interval,
                                                     tm.octaves, tm.target_cents, cfg_.audible);
        r.partial_low = h.found ? h.partial_a : -1;
        r.partial_high = h.found ? h.partial_b : -1;
        r.predicted_beat_hz = h.beat_hz;

        // Measured beat: the latest envelope measurement, or the median of the frequency differences.
        std::size_t last = b;
        while (last > a && src_[last - 1] == static_cast<std::uint8_t>(BeatSource::none)) --last;
        if (last > a) {
            const auto src = static_cast<BeatSource>(src_[last - 1]);
            r.beat_source = src;
            if (src == BeatSource::frequency_difference) {
                std::size_t n = 0;
                for (std::size_t i = a; i < b; ++i)
                    if (src_[i] == static_cast<std::uint8_t>(BeatSource::frequency_difference))
                        scratch_[n++] = beat_[i];
                std::nth_element(scratch_.begin(), scratch_.begin() + static_cast<std::ptrdiff_t>(n / 2),
                                 scratch_.begin() + static_cast<std::ptrdiff_t>(n));
                r.measured_beat_hz = scratch_[n / 2];
            } else {
                r.measured_beat_hz = beat_[last - 1];
            }
        }
        out = r;
    } else {
        ++dropped_short_;
    }
    start_with(m);
    return ok;
}

}  // namespace beatless::pitch
