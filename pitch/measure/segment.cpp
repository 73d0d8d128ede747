// NoteSegmenter — the method in detail (summary in segment.h).
//
// Fed tracker frames one by one (pitch/dsp/yin.h PitchFrame), it emits each note
// as it ends. Steps: (1) frames below min_confidence, unvoiced, or within
// drone_tol_cents of the root's own pitch class (the drone leaking into the
// tracker) count as silence; (2) a note starts at the first voiced frame
// and ends at a silence longer than max_gap_s (bridge_s when the pitch comes
// back to the note, its vibrato's range allowed for: dropouts in noise; hold_s when besides the level stayed up
// through the gap: the sound went on, only its pitch was lost; a frame far from the note meanwhile, a tracker's
// slip, is held aside until the pitch comes back, or starts the next note if it does not), or splits where a 0.2 s
// trailing median of the pitch (blind to the tracker's octave slips) leaves the note's vibrato centre by more than
// change_cents for change_s (a legato step, cut where a two-level step fit
// puts it); (3) notes shorter than min_note_s are dropped; (4) per note, a
// streaming VibratoCentre (pitch/dsp/vibrato.h) gives a centre reading per
// frame; the settle time runs from the onset to the middle of the first
// averaging window whose centre stays within settle_cents of the note's
// centre for the rest of the note; the note's centre f0 is the whole-cycle
// mean (pitch/dsp/whole_cycles.h) over the frames from that reading on (the second
// half when that leaves under 0.3 s), leaving out the last release_trim_s,
// whose tracker frames already hear the release; (5) nearest target (pitch/theory/targets.h), deviation,
// spread, and the beat rate of the coinciding partials against the root
// (|q f - p root| for target p/q, Helmholtz; pitch/theory/beats.h).
// Memory: bounded by max_note_s (a longer note is closed and marked
// truncated, and the next note continues). Allocation happens in the
// constructor only; push() and finish() never allocate.

#include "pitch/measure/segment.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/dsp/whole_cycles.h"
#include "pitch/theory/beats.h"

#include <algorithm>
#include <cmath>
#include <cstring>

namespace beatless::pitch {

namespace {
void check(bool ok, const char* what, double v) {
    if (!ok) throw Error("note segmentation: " + std::string(what) + " " + format_trimmed(v, 6) + " is out of range");
}

VibratoConfig vibrato_of(const SegmentConfig& c) {
    VibratoConfig v = c.vibrato;
    v.hop_s = c.hop_s;
    v.max_gap_s = c.max_gap_s;
    return v;
}
}  // namespace

NoteSegmenter::NoteSegmenter(const SegmentConfig& config, const TargetSet& targets)
    : cfg_(config),
      targets_(targets),
      vib_((check(config.hop_s >= 1e-4 && config.hop_s <= 0.1, "hop_s", config.hop_s), vibrato_of(config))) {
    check(std::isfinite(cfg_.root_hz) && cfg_.root_hz >= 1.0 && cfg_.root_hz <= 20000.0, "root (Hz)", cfg_.root_hz);
    if (targets_.targets.empty()) throw Error("note segmentation: the target set '" + targets_.id + "' is empty");
    check(cfg_.min_note_s >= 0.0 && cfg_.min_note_s <= 10.0, "min_note_s", cfg_.min_note_s);
    check(cfg_.max_gap_s >= 0.0 && cfg_.max_gap_s <= 1.0, "max_gap_s", cfg_.max_gap_s);
    check(cfg_.change_cents > 0.0, "change_cents", cfg_.change_cents);
    check(cfg_.smooth_s >= cfg_.hop_s && cfg_.smooth_s <= 2.0, "smooth_s", cfg_.smooth_s);
    check(cfg_.settle_cents > 0.0, "settle_cents", cfg_.settle_cents);
    check(cfg_.release_trim_s >= 0.0 && cfg_.release_trim_s <= 0.2, "release_trim_s", cfg_.release_trim_s);
    check(cfg_.max_note_s >= 1.0 && cfg_.max_note_s <= 600.0, "max_note_s", cfg_.max_note_s);
    cap_ = static_cast<std::size_t>(std::ceil(cfg_.max_note_s / cfg_.hop_s)) + 1;
    t_.assign(cap_, 0.0);
    c_.assign(cap_, 0.0);
    centre_.assign(cap_, 0.0);
    win_start_.assign(cap_, 0.0);
    scratch_.assign(cap_, 0.0);
    conf_.assign(cap_, 0.0);
    smooth_n_ = std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(cfg_.smooth_s / cfg_.hop_s)));
    trim_n_ = static_cast<std::size_t>(std::lround(cfg_.release_trim_s / cfg_.hop_s));
    recent_.assign(smooth_n_, 0.0);
    check(cfg_.bridge_s >= cfg_.max_gap_s && cfg_.bridge_s <= 1.0, "bridge_s", cfg_.bridge_s);
    check(cfg_.hold_s >= cfg_.bridge_s && cfg_.hold_s <= 2.0, "hold_s", cfg_.hold_s);
    check(cfg_.hold_db >= 0.0 && cfg_.hold_db <= 20.0, "hold_db", cfg_.hold_db);
    check(cfg_.outlier_cents > cfg_.change_cents, "outlier_cents", cfg_.outlier_cents);
}

double NoteSegmenter::recent_median() noexcept {
    const std::size_t k = std::min(n_, smooth_n_);
    std::copy(c_.begin() + static_cast<std::ptrdiff_t>(n_ - k), c_.begin() + static_cast<std::ptrdiff_t>(n_),
              recent_.begin());
    std::nth_element(recent_.begin(), recent_.begin() + static_cast<std::ptrdiff_t>(k / 2),
                     recent_.begin() + static_cast<std::ptrdiff_t>(k));
    return recent_[k / 2];
}

double NoteSegmenter::back_cents() const noexcept {
    const std::size_t k = std::min(n_, smooth_n_);
    if (k == 0) return cfg_.change_cents;
    const auto [lo, hi] = std::minmax_element(c_.begin() + static_cast<std::ptrdiff_t>(n_ - k),
                                              c_.begin() + static_cast<std::ptrdiff_t>(n_));
    return cfg_.change_cents + 0.5 * (*hi - *lo);
}

double NoteSegmenter::reach_s(double gap_s) const noexcept {
    const bool level_held =
        level_n_ > 0 && gap_level_n_ > 0 && !gap_silent_ &&
        gap_level_sum_ / static_cast<double>(gap_level_n_) >= level_sum_ / static_cast<double>(level_n_) - cfg_.hold_db;
    return level_held && gap_s <= cfg_.hold_s + 0.5 * cfg_.hop_s ? cfg_.hold_s : cfg_.bridge_s;
}

void NoteSegmenter::add_frame(double t_s, double cents) noexcept {
    const VibratoReading& r = vib_.push(t_s, cents, true);
    t_[n_] = t_s;
    c_[n_] = cents;
    centre_[n_] = r.centre_cents;
    win_start_[n_] = r.span_start_s;
    ++n_;
    last_voiced_t_ = t_s;
    smooth_sum_ += cents;
    if (n_ > smooth_n_) smooth_sum_ -= c_[n_ - 1 - smooth_n_];
}

void NoteSegmenter::start_with(std::size_t from) noexcept {
    const std::size_t keep = n_ - from;
    std::memmove(t_.data(), t_.data() + from, keep * sizeof(double));
    std::memmove(c_.data(), c_.data() + from, keep * sizeof(double));
    std::memmove(conf_.data(), conf_.data() + from, keep * sizeof(double));
    n_ = 0;
    cut_before_ = false;
    level_sum_ = 0.0;
    level_n_ = 0;
    gap_level_sum_ = 0.0;
    gap_level_n_ = 0;
    gap_silent_ = false;
    vib_.reset();
    smooth_sum_ = 0.0;
    anchor_ = NAN;
    depart_frames_ = 0;
    // Re-run the centre estimator over the frames that move to the new note.
    for (std::size_t i = 0; i < keep; ++i) add_frame(t_[i], c_[i]);
}

bool NoteSegmenter::push(const PitchFrame& frame, NoteResult& out) noexcept {
    bool voiced = frame.voiced() && std::isfinite(frame.f0_hz) && std::isfinite(frame.t_s) &&
                  frame.confidence >= cfg_.min_confidence;
    double cents = 0.0;
    if (voiced) {
        cents = 1200.0 * std::log2(frame.f0_hz / cfg_.root_hz);
        if (cfg_.skip_drone && std::fabs(cents - 1200.0 * std::round(cents / 1200.0)) <= cfg_.drone_tol_cents) {
            voiced = false;
            ++drone_frames_;
        }
    }
    // A frame far from an established note (50 ms of it) within reach of its last frame (a slip of the tracker, an
    // octave or a fifth; or, after a dropout longer than max_gap_s, anything past back_cents) is held aside: a dropout if the
    // pitch comes back to the note, the start of the next note if it does not (the note ends at its last frame).
    const bool established = n_ >= std::max<std::size_t>(4, smooth_n_ / 4);
    const double gap_s = n_ > 0 ? frame.t_s - last_voiced_t_ : 0.0;
    const bool after_gap = gap_s > cfg_.max_gap_s + 0.5 * cfg_.hop_s;
    if (n_ > 0 && !voiced) {  // the level through a gap: a rest falls, a dropout in noise holds
        if (std::isfinite(frame.level_dbfs)) {
            gap_level_sum_ += frame.level_dbfs;
            ++gap_level_n_;
        } else {
            gap_silent_ = true;
        }
    }
    const double reach = n_ > 0 ? reach_s(gap_s) + 0.5 * cfg_.hop_s : 0.0;
    if (voiced && established && gap_s <= reach && n_ + held_ < cap_) {
        const double off = std::fabs(cents - recent_median());
        if (off > cfg_.outlier_cents || (after_gap && off > back_cents())) {
            t_[n_ + held_] = frame.t_s;
            c_[n_ + held_] = cents;
            conf_[n_ + held_] = frame.confidence;
            ++held_;
            return false;
        }
    }
    if (!voiced) {
        if (n_ > 0 && gap_s > reach - 0.5 * cfg_.hop_s) return close_before_held(out, false);
        return false;
    }
    bool emitted = false;
    if (n_ > 0 && after_gap && (gap_s > reach || std::fabs(cents - recent_median()) > back_cents())) {
        // Within reach the pitch came back elsewhere: the dropout cut the note here.
        emitted = close_before_held(out, gap_s <= reach);
    } else {
        held_ = 0;  // back at the note: the frames held aside were slips
        if (n_ == cap_) emitted = close(n_, true, out);
    }
    gap_level_sum_ = 0.0;
    gap_level_n_ = 0;
    gap_silent_ = false;
    if (std::isfinite(frame.level_dbfs)) {
        level_sum_ += frame.level_dbfs;
        ++level_n_;
    }
    conf_[n_] = frame.confidence;
    add_frame(frame.t_s, cents);
    if (emitted || n_ < 2 * smooth_n_) return emitted;

    // Legato split: the trailing median leaves the note's centre and stays away.
    const double smooth = recent_median();
    if (std::isnan(anchor_)) {
        anchor_ = centre_[n_ - 1];
        return false;
    }
    if (std::fabs(smooth - anchor_) > cfg_.change_cents) {
        if (depart_frames_++ == 0) depart_from_ = n_ - 1;
        if (static_cast<double>(depart_frames_) * cfg_.hop_s >= cfg_.change_s)
            return close(split_point(smooth), false, out);
    } else {
        depart_frames_ = 0;
        anchor_ = centre_[n_ - 1];
    }
    return false;
}

// Where the step happened: over the frames since a trailing window before
// the departure, the cut k that best fits level anchor_ before it and level
// `after` from it on (least squares; maximises the suffix sum of
// (after - anchor)(2 c - anchor - after)).
std::size_t NoteSegmenter::split_point(double after) const noexcept {
    const std::size_t lo = depart_from_ > 2 * smooth_n_ ? depart_from_ - 2 * smooth_n_ : 1;
    double suffix = 0.0, best = -INFINITY;
    std::size_t at = depart_from_;
    for (std::size_t k = n_; k-- > lo;) {
        suffix += (after - anchor_) * (2.0 * c_[k] - anchor_ - after);
        if (suffix > best) {
            best = suffix;
            at = k;
        }
    }
    return std::max<std::size_t>(at, 1);
}

// Ends the note at its last frame; the frames held aside begin the next.
bool NoteSegmenter::close_before_held(NoteResult& out, bool cut) noexcept {
    const std::size_t m = n_;
    // Cut by a dropout also when the frames held aside came after one longer than max_gap_s.
    cut = cut || (held_ > 0 && t_[n_] - t_[n_ - 1] > cfg_.max_gap_s + 0.5 * cfg_.hop_s);
    n_ += held_;
    held_ = 0;
    cut_after_ = cut;
    const bool emitted = close(m, false, out);
    cut_after_ = false;
    cut_before_ = cut;  // the next note begins with the held frames
    return emitted;
}

bool NoteSegmenter::finish(NoteResult& out) noexcept {
    held_ = 0;
    if (n_ == 0) return false;
    return close(n_, false, out);
}

bool NoteSegmenter::close(std::size_t m, bool truncated, NoteResult& out) noexcept {
    bool ok = false;
    const double dur = m > 0 ? t_[m - 1] - t_[0] + cfg_.hop_s : 0.0;
    if (m >= 4 && dur >= cfg_.min_note_s) {
        ok = true;
        NoteResult r;
        r.start_s = t_[0];
        r.end_s = t_[m - 1];
        r.frames = static_cast<int>(m);
        r.heard_share = std::min(1.0, static_cast<double>(m) * cfg_.hop_s / dur);
        r.truncated = truncated;
        double conf_sum = 0.0;
        for (std::size_t i = 0; i < m; ++i) conf_sum += conf_[i];
        r.confidence = conf_sum / static_cast<double>(m);

        // The last frames ride the release (the tracker's span reaches past
        // the offset): they are left out of every measurement below.
        const std::size_t me = m >= trim_n_ + 8 ? m - trim_n_ : m;

        // Provisional centre: median of the centre readings over the second half.
        const std::size_t h0 = me / 2;
        std::copy(centre_.begin() + static_cast<std::ptrdiff_t>(h0), centre_.begin() + static_cast<std::ptrdiff_t>(me),
                  scratch_.begin());
        const std::size_t nh = me - h0;
        std::nth_element(scratch_.begin(), scratch_.begin() + static_cast<std::ptrdiff_t>(nh / 2),
                         scratch_.begin() + static_cast<std::ptrdiff_t>(nh));
        const double c0 = scratch_[nh / 2];

        // Settled: the last run of centre readings within the band.
        std::size_t is = me;
        while (is > 0 && std::fabs(centre_[is - 1] - c0) <= cfg_.settle_cents) --is;
        std::size_t s_idx = h0;
        if (is < me) {
            r.settle_s = std::max(0.0, 0.5 * (win_start_[is] + t_[is]) - t_[0]);
            s_idx = is;
        }
        if (t_[me - 1] - t_[s_idx] < 0.3) s_idx = std::min(s_idx, h0);
        const std::size_t ns = me - s_idx;

        // Centre over whole vibrato cycles of the settled part.
        CycleConfig cc;
        cc.min_rate_hz = cfg_.vibrato.min_rate_hz;
        cc.max_rate_hz = cfg_.vibrato.max_rate_hz;
        cc.hysteresis_abs = 0.5 * cfg_.vibrato.min_depth_cents;
        cc.max_period_ratio = 1.6;
        const CycleStats cs = find_cycles(&t_[s_idx], &c_[s_idx], ns, cc);
        double centre = 0.0, sd = 0.0;
        mean_and_spread(&c_[s_idx], ns, centre, sd);
        r.spread_cents = sd;
        if (!(sd <= cfg_.max_spread_cents)) {
            ++dropped_short_;
            start_with(m);
            return false;
        }
        // A gap is a step over the hop's jitter (frames 1.5 hops apart and more).
        const double gap_s = 1.5 * cfg_.hop_s;
        r.dropout_bias_cents = ns >= 2 ? dropout_bias(&t_[s_idx], &c_[s_idx], ns, t_[s_idx], t_[me - 1], gap_s) : 0.0;
        if (cs.found && cs.depth >= cfg_.vibrato.min_depth_cents) {
            centre = cs.mean;
            r.dropout_bias_cents = dropout_bias(&t_[s_idx], &c_[s_idx], ns, cs.t_first_s, cs.t_last_s, gap_s);
            r.vibrato = true;
            r.vibrato_rate_hz = cs.rate_hz;
            r.vibrato_depth_cents = cs.depth;
        }
        // A piece of a note cut off by a dropout, too short for a whole cycle of the slowest vibrato and without one:
        // its mean is of part of a cycle, and the centre of the vibrato may lie as far as any pitch the piece heard.
        if ((cut_before_ || cut_after_) && !r.vibrato && dur < 1.0 / cfg_.vibrato.min_rate_hz) {
            const auto [lo, hi] = std::minmax_element(c_.begin(), c_.begin() + static_cast<std::ptrdiff_t>(me));
            r.dropout_bias_cents = std::max({std::fabs(r.dropout_bias_cents), *hi - centre, centre - *lo});
        }
        double cm = 0.0;
        mean_and_spread(&centre_[s_idx], ns, cm, r.centre_spread_cents);

        r.cents_above_root = centre;
        r.ratio = std::exp2(centre / 1200.0);
        r.centre_f0_hz = cfg_.root_hz * r.ratio;
        const TargetMatch tm = nearest_target(targets_, centre, cfg_.octave_equivalent);
        r.target_index = static_cast<int>(tm.index);
        r.target_octaves = tm.octaves;
        r.target_cents = tm.target_cents;
        r.dev_cents = tm.dev_cents;
        const Interval& iv = targets_.targets[tm.index].interval;
        if (iv.is_ratio()) {
            const Ratio own = beating_ratio(iv, tm.octaves);
            r.own_partial_root = static_cast<int>(std::min<std::int64_t>(own.num, 1 << 30));
            r.own_partial_voice = static_cast<int>(std::min<std::int64_t>(own.den, 1 << 30));
        }
        const AudiblePair heard =
            audible_pair_of_target(cfg_.root_hz, r.centre_f0_hz, iv, tm.octaves, tm.target_cents, cfg_.audible);
        if (heard.found) {
            r.partial_root = heard.partial_a;
            r.partial_voice = heard.partial_b;
            r.beat_hz = heard.beat_hz;
            r.beat_in_tune_hz = heard.beat_at_target_hz;
        }
        out = r;
    } else {
        ++dropped_short_;
    }
    start_with(m);
    return ok;
}

NoteSummary::NoteSummary(const TargetSet& targets) : n_targets_(targets.targets.size()) {}

void NoteSummary::add(const NoteResult& note) { add(note.target_index, note.target_octaves, note.dev_cents); }

void NoteSummary::add(int target_index, int target_octaves, double dev_cents) {
    if (target_index < 0 || static_cast<std::size_t>(target_index) >= n_targets_ || !std::isfinite(dev_cents)) return;
    Acc& a = acc_[{target_index, target_octaves}];
    ++a.n;
    const double d = dev_cents - a.mean;
    a.mean += d / a.n;
    a.m2 += d * (dev_cents - a.mean);
    a.abs_sum += std::fabs(dev_cents);
}

std::vector<TargetSummary> NoteSummary::rows() const {
    std::vector<TargetSummary> out;
    for (const auto& [key, a] : acc_)
        out.push_back(
            {key.first, key.second, a.n, a.mean, a.n > 1 ? std::sqrt(a.m2 / (a.n - 1)) : 0.0, a.abs_sum / a.n});
    return out;
}

}  // namespace beatless::pitch
