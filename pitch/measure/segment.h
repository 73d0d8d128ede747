// NoteSegmenter — held notes of the performer's line, measured against the root, each emitted as it ends.
// Method: onsets and offsets at silences or legato steps, drone frames and short notes skipped; per note the vibrato
// centre (pitch/dsp/vibrato.h), nearest target (pitch/theory/targets.h), deviation, spread, settle time and the beat
// rate against the root (Helmholtz; pitch/theory/beats.h). Steps in segment.cpp.
// Thread: one at a time. Allocates: in the constructor only; memory is bounded by max_note_s.
#pragma once

#include "pitch/dsp/vibrato.h"
#include "pitch/dsp/yin.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/targets.h"

#include <cmath>
#include <cstddef>
#include <map>
#include <string>
#include <utility>
#include <vector>

namespace beatless::pitch {

struct SegmentConfig {
    double root_hz = 0.0;                      // the drone's fundamental (required, > 0)
    AudibleRange audible;                      // which partials can be heard beating (pitch/theory/beats.h)
    double hop_s = 0.005;                      // tracker hop, for sizing (default 5 ms)
    double min_confidence = 0.5;               // weaker frames count as silence (default 0.5)
    double min_note_s = 0.15;                  // shorter notes are dropped (default 150 ms)
    double max_gap_s = 0.04;                   // silences up to this are bridged (default 40 ms)
    double bridge_s = 0.12;                    // ... and up to this when the pitch comes back to the note: within
                                               //   change_cents of its recent median, widened by half the recent
                                               //   frames' range (a vibrato) (dropouts in noise; default 120 ms)
    double hold_s = 0.35;                      // ... and up to this when, besides, the level through the gap
                                               //   stayed within hold_db of the note's mean level: the sound went
                                               //   on, only its pitch was lost (default 350 ms)
    double hold_db = 1.5;                      // (default 1.5 dB; a rest in noise as loud as the voice falls 3 dB)
    double outlier_cents = 150.0;              // a frame this far from the note's recent median is a tracker slip
                                               //   (an octave or fifth in noise): held aside, and left out like a
                                               //   dropout when the pitch comes back within bridge_s; else the
                                               //   next note starts with it (default 150 cents)
    double max_spread_cents = 100.0;           // a "note" whose pitch wanders more than this (standard deviation)
                                               //   is the tracker lost in noise, not a held note: dropped and
                                               //   counted with the short ones (default 100 cents; a +-100 c
                                               //   vibrato spreads 71 c)
    double change_cents = 40.0;                // legato split threshold (default 40 cents)
    double change_s = 0.08;                    // ... held this long (default 80 ms)
    double smooth_s = 0.2;                     // trailing median for the split test (default 200 ms)
    double settle_cents = 5.0;                 // settle band around the centre (default 5 cents)
    double release_trim_s = 0.025;             // last frames of a note left out of its measurement: the
                                               //   tracker's span already hears the release (default 25 ms,
                                               //   half of YinConfig::span_s); start_s/end_s keep them
    bool skip_drone = true;                    // frames at the root's pitch class are the drone (default on)
    double drone_tol_cents = 3.0;              // ... within this many cents (default 3)
    double max_note_s = 30.0;                  // memory cap per note (default 30 s)
    bool octave_equivalent = true;             // targets match in every octave (default on)
    VibratoConfig vibrato{.fallback_s = 0.1};  // centre estimator (hop_s, max_gap_s taken from above;
                                               //   a short plain-mean window so settling shows)
};

struct NoteResult {
    double start_s = 0.0;              // first voiced frame
    double end_s = 0.0;                // last voiced frame
    int frames = 0;                    // voiced frames in the note
    double heard_share = 1.0;          // frames times the hop over the note's time: how much of it the tracker heard
    double centre_f0_hz = 0.0;         // vibrato-centre f0
    double cents_above_root = 0.0;     // 1200 log2(centre_f0 / root)
    double ratio = 0.0;                // centre_f0 / root
    int target_index = -1;             // into the TargetSet
    int target_octaves = 0;            // octave shift of the match
    double target_cents = NAN;         // target after the shift
    double dev_cents = NAN;            // centre minus target: + is sharp
    double spread_cents = 0.0;         // standard deviation of the pitch over the settled part (vibrato included)
    double centre_spread_cents = 0.0;  // standard deviation of the centre readings over the settled part
    double confidence = 0.0;           // mean tracker confidence of the note's frames (0..1)
    double settle_s = NAN;             // onset to settled within settle_cents; NaN if it never settled
    bool vibrato = false;              // whole vibrato cycles were averaged
    double dropout_bias_cents = 0.0;   // how far the dropouts inside the averaged stretch may have moved the centre
                                       //   (pitch/dsp/whole_cycles.h, dropout_bias; + the centre may read flat):
                                       //   a voice whose vibrato crests fade into the drone's notch loses them.
                                       //   A piece cut off by a dropout, shorter than a vibrato cycle: as far as
                                       //   the farthest pitch it heard
    double vibrato_rate_hz = 0.0;
    double vibrato_depth_cents = 0.0;
    // The audible pair (pitch/theory/beats.h, audible_pair) for the target and the
    // drone's partials: root partial p meets voice partial q; -1 / NaN when
    // no present partials coincide near the target.
    int partial_root = -1;         // p: harmonic of the root ...
    int partial_voice = -1;        // ... coinciding with the voice's q-th harmonic
    double beat_hz = NAN;          // |q f - p root| at the centre
    double beat_in_tune_hz = NAN;  // the same pair's rate with the voice exactly on target (0 for the own pair)
    int own_partial_root = -1;     // detail: the target's own coinciding pair (729, 512 for 729/512) ...
    int own_partial_voice = -1;    // ... -1 for a cents target
    bool truncated = false;        // closed at max_note_s
};

class NoteSegmenter {
public:
    NoteSegmenter(const SegmentConfig& config, const TargetSet& targets);  // throws Error (root, empty set, ranges)

    // Feeds one frame (frames in time order). Returns true and fills `out`
    // when a note has ended. Thread: one at a time. Allocates: no.
    bool push(const PitchFrame& frame, NoteResult& out) noexcept;

    // Closes the open note at the end of the stream. Allocates: no.
    bool finish(NoteResult& out) noexcept;

    std::size_t short_notes_dropped() const noexcept { return dropped_short_; }
    std::size_t drone_frames() const noexcept { return drone_frames_; }
    const SegmentConfig& config() const noexcept { return cfg_; }

private:
    void start_with(std::size_t from) noexcept;  // keep frames [from, n_) as the new note
    bool close(std::size_t m, bool truncated, NoteResult& out) noexcept;
    // Closes the note; the frames held aside start the next. cut: a dropout cut the two apart (the pitch came back
    // elsewhere within bridge_s).
    bool close_before_held(NoteResult& out, bool cut) noexcept;
    std::size_t split_point(double after) const noexcept;
    void add_frame(double t_s, double cents) noexcept;

    SegmentConfig cfg_;
    TargetSet targets_;
    VibratoCentre vib_;
    std::size_t cap_ = 0;
    std::size_t n_ = 0;                  // frames in the open note
    bool cut_before_ = false;            // the open note began after a dropout cut it from the one before
    bool cut_after_ = false;             // (while closing) the note ends where a dropout cut it from the next
    std::size_t held_ = 0;               // frames after them held aside (t_, c_, conf_ [n_, n_ + held_)): slips or the
                                         //   next note's start, until the pitch comes back or bridge_s passes
    double recent_median() noexcept;     // median of the last smooth_n_ frames (fewer at the start)
    double back_cents() const noexcept;  // how far from recent_median() a pitch after a dropout is back at the note
    double reach_s(double gap_s) const noexcept;  // the longest dropout bridged now (bridge_s, or hold_s)

    std::vector<double> t_, c_, centre_, win_start_, scratch_, recent_, conf_;
    double last_voiced_t_ = -1e300;
    double level_sum_ = 0.0;      // sum of the note's voiced frames' levels (dBFS) ...
    std::size_t level_n_ = 0;     // ... over this many (finite levels only)
    double gap_level_sum_ = 0.0;  // the same over the frames since the last voiced one
    std::size_t gap_level_n_ = 0;
    bool gap_silent_ = false;  // a frame since the last voiced one was digital silence
    std::size_t smooth_n_ = 1;
    std::size_t trim_n_ = 0;  // release_trim_s in frames
    double smooth_sum_ = 0.0;
    double anchor_ = NAN;          // centre the split test compares with
    std::size_t depart_from_ = 0;  // first frame of a departure
    std::size_t depart_frames_ = 0;
    std::size_t dropped_short_ = 0;
    std::size_t drone_frames_ = 0;
};

// Per-target summary of the notes: "10/7 averages 6 cents flat".
// One row a target at each octave it was matched at (5/4 and 5/4 an octave up, 5/2, are two rows), so a row names
// what its notes were judged against.
struct TargetSummary {
    int target_index = -1;
    int target_octaves = 0;       // octave shift of the match, as NoteResult::target_octaves
    int count = 0;                // notes matched to the target
    double mean_dev_cents = 0.0;  // mean signed deviation: + is sharp
    double spread_cents = 0.0;    // standard deviation of the deviations (0 for one note)
    double mean_abs_dev_cents = 0.0;
};

class NoteSummary {
public:
    explicit NoteSummary(const TargetSet& targets);
    void add(const NoteResult& note);  // notes without a target are ignored
    // The same for any measurement (a dyad), matched at `target_octaves`.
    void add(int target_index, int target_octaves, double dev_cents);
    void add(int target_index, double dev_cents) { add(target_index, 0, dev_cents); }
    std::vector<TargetSummary> rows() const;  // (target, octave) pairs with notes, in set order, low octave first
private:
    struct Acc {
        int n = 0;
        double mean = 0.0, m2 = 0.0, abs_sum = 0.0;
    };
    std::size_t n_targets_ = 0;
    std::map<std::pair<int, int>, Acc> acc_;  // by (target index, octaves)
};

}  // namespace beatless::pitch
