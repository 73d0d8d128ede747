// DyadSegmenter — held double stops (dyads) in the frames of two voices (pitch/measure/two_voice.h), as each ends.
// Method: NoteSegmenter's rules (pitch/measure/segment.h) for two voices; the beat rate the f0s predict, |q f_high -
// p f_low| (Helmholtz; pitch/theory/beats.h), beside the one measured. Rules: DEVELOPERS.md, "Methods in detail".
// Thread: one at a time. Allocates: in the constructor only; memory is bounded by max_dyad_s.
#pragma once

#include "pitch/measure/two_voice.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/targets.h"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <vector>

namespace beatless::pitch {

struct DyadSegmentConfig {
    double hop_s = 0.01;  // tracker hop, for sizing (default 10 ms)
    AudibleRange audible{.partials_a = 12,
                         .partials_b = 12};  // partials each voice sounds (default 12, as TwoVoiceConfig); 4 kHz limit
    double min_confidence = 0.5;             // weaker frames count as a gap (default 0.5)
    double min_dyad_s = 0.2;                 // shorter dyads are dropped (default 200 ms)
    double max_gap_s = 0.05;                 // gaps up to this are bridged (default 50 ms)
    double change_cents = 40.0;              // a voice moving this far ... (default 40 cents)
    double change_s = 0.08;                  // ... for this long starts a new dyad (default 80 ms)
    double smooth_s = 0.1;                   // trailing mean for the change test (default 100 ms)
    double edge_s = 0.085;                   // frames this close to either end are left out of the
                                             //   measurement: their window reaches past the dyad
                                             //   (default 85 ms, half of TwoVoiceConfig::window_s)
    double max_dyad_s = 60.0;                // memory cap per dyad (default 60 s)
    bool octave_equivalent = true;           // targets match in every octave (default on)
};

struct DyadResult {
    double start_s = 0.0;     // first two-voice frame
    double end_s = 0.0;       // last two-voice frame
    int frames = 0;           // two-voice frames in the dyad
    int measured_frames = 0;  // frames the figures below average
    double f_low_hz = 0.0;    // mean (in cents) over the measured frames
    double f_high_hz = 0.0;
    double interval_cents = NAN;  // 1200 log2(f_high / f_low)
    double spread_cents = 0.0;    // standard deviation of the per-frame interval
    int target_index = -1;        // into the TargetSet
    int target_octaves = 0;       // octave shift of the match
    double target_cents = NAN;    // target after the shift
    double dev_cents = NAN;       // interval minus target: + is wide
    std::int64_t ratio_num = 0;   // the just ratio p/q the beats refer to
    std::int64_t ratio_den = 0;
    int partial_low = -1;            // p: harmonic of the low voice ...
    int partial_high = -1;           // ... meeting this harmonic (q) of the high voice
    double predicted_beat_hz = NAN;  // |q f_high - p f_low| from the mean f0s
    double measured_beat_hz = NAN;   // from the partials (NaN when never measured)
    BeatSource beat_source = BeatSource::none;
    int clipped_frames = 0;  // frames whose newest samples reached full scale
    bool truncated = false;  // closed at max_dyad_s
};

class DyadSegmenter {
public:
    DyadSegmenter(const DyadSegmentConfig& config, const TargetSet& targets);  // throws Error (empty set, ranges)

    // Feeds one frame. Returns true and fills `out` when a dyad has ended.
    // Thread: one at a time. Allocates: no.
    bool push(const TwoVoiceFrame& frame, DyadResult& out) noexcept;

    // Closes the open dyad at the end of the stream. Allocates: no.
    bool finish(DyadResult& out) noexcept;

    std::size_t short_dyads_dropped() const noexcept { return dropped_short_; }
    const DyadSegmentConfig& config() const noexcept { return cfg_; }

private:
    void add_frame(const TwoVoiceFrame& f) noexcept;
    void start_with(std::size_t from) noexcept;
    bool close(std::size_t m, bool truncated, DyadResult& out) noexcept;
    bool departed(double smooth, double anchor) const noexcept {
        return std::fabs(smooth - anchor) > cfg_.change_cents;
    }

    DyadSegmentConfig cfg_;
    TargetSet targets_;
    std::size_t cap_ = 0;
    std::size_t n_ = 0;  // frames in the open dyad
    std::vector<double> t_, lo_, hi_, beat_, scratch_;
    std::vector<std::uint8_t> src_, clip_;
    double last_t_ = -1e300;
    std::size_t smooth_n_ = 1;
    double sum_lo_ = 0.0, sum_hi_ = 0.0;        // trailing sums over smooth_n_ frames
    double anchor_lo_ = NAN, anchor_hi_ = NAN;  // the dyad's level per voice
    double level_lo_ = 0.0, level_hi_ = 0.0;    // sums behind the level ...
    std::size_t level_n_ = 0;                   // ... over this many frames
    std::size_t depart_from_ = 0;
    std::size_t depart_frames_ = 0;
    std::size_t dropped_short_ = 0;
};

}  // namespace beatless::pitch
