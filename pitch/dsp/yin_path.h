// Voicing and pitch chosen along a path across frames, for the file path: several candidate periods per frame, each
// with a probability from its d', and an unvoiced state; the best path by the Viterbi algorithm.
// Method: M. Mauch and S. Dixon, "pYIN: a fundamental frequency estimator using probabilistic threshold
// distributions", ICASSP 2014, pp. 659-663 (candidates from YIN's dips with probabilities, an unvoiced state, a hidden
// Markov model whose transitions favour small pitch changes, decoded over the whole file); the decoding after G. D.
// Forney, "The Viterbi algorithm", Proc. IEEE 61(3), 268-278 (1973). Our own: a candidate's probability is the
// tracker's calibrated voicing probability of its dip (yin_voicing.h) rather than pYIN's threshold prior, and
// candidate 0 is the tracker's own choice, refined (yin.h, FrameCandidates).
// Thread: one at a time. Allocates: yes (the frames of a file are kept until finish()).
#pragma once

#include "pitch/dsp/yin.h"

#include <cstddef>
#include <functional>
#include <span>
#include <vector>

namespace beatless::pitch {

// What frame_candidates() needs of a coarse frame besides its difference functions.
struct CandidateEvidence {
    std::size_t lag_min = 1, lag_max = 1;  // the coarse lag range, decimated samples
    double rate_dec = 0.0;                 // the coarse stage's sample rate, Hz
    double period_dec = 0.0;               // the tracker's choice, decimated samples
    double aperiodicity = 1.0;             // ... its d'
    double confidence = 0.0;               // ... and its voicing probability
    double level_dbfs = -200.0;            // the frame's level and the running noise floor (yin_voicing.h)
    double floor_dbfs = -200.0;
};

// Candidate 0: the tracker's choice; then the deepest other local minima of dn in the lag range (by the bottom of the
// parabola through each), at least 3 % away from the choice and from each other, up to kMaxPitchCandidates in all.
// A candidate whose period is k = 2..6 times another's (within 3 %) and whose d' is not far deeper (the other's at
// most 1.5 d' + 0.05, the tracker's divisor rule, yin_coarse.h) is marked `multiple`.
// d: YIN's difference function (for the parabolic period), dn: its cumulative mean normalised form. Allocates: no.
FrameCandidates frame_candidates(std::span<const double> d, std::span<const double> dn,
                                 const CandidateEvidence& e) noexcept;

// The Viterbi algorithm on a lattice of `frames` frames with states(t) states each (at least 1): the state sequence
// that minimises sum_t emission(t, s_t) + sum_{t>0} transition(t, s_{t-1}, s_t). Ties go to the lower state index.
// Allocates: yes.
std::vector<std::size_t> viterbi_path(std::size_t frames, const std::function<std::size_t(std::size_t)>& states,
                                      const std::function<double(std::size_t, std::size_t)>& emission,
                                      const std::function<double(std::size_t, std::size_t, std::size_t)>& transition);

// Costs of the path (natural-log units: a cost c is a probability factor e^-c).
struct PathCosts {
    double switch_cost = 10.0;  // a change between voiced and unvoiced
    double free_cents = 30.0;   // pitch change per frame that costs nothing (a vibrato of +-100 c at 7.5 Hz: 24 c)
    double cents_scale = 30.0;  // ... beyond it, one unit per this many cents
    double jump_cost = 6.0;     // at most this: a new note
    double other_cost = 0.3;    // a candidate other than the tracker's choice (its octave rules are evidence)
    // A candidate whose period is a multiple of another's nearly as deep (PitchCandidate::multiple): in noise every
    // multiple of the period dips about as deep as the period itself, and YIN takes the first (de Cheveigne and
    // Kawahara 2002, step 4; pYIN's prior likewise favours the shortest lag under each threshold).
    double multiple_cost = 3.0;
    double floor = 1e-3;  // probabilities are taken at least this (and 1 - p at least this)
    // Our addition: a voiced stretch of the path between jumps (changes that cost jump_cost) shorter than this is
    // unvoiced. Other talkers' syllables are voiced for 60-170 ms at a time (babble at 3-5.5 syllables a second);
    // a note a performer holds to be heard in tune is longer.
    double min_run_s = 0.15;
};

// The frames of a file with their candidates (YinTracker with keep_candidates), decoded at finish(): a frame is
// voiced where the best path passes through one of its candidates, at that candidate's f0. Where that is the
// tracker's voiced choice, the frame is the tracker's (refined) unchanged.
class VoicingPath {
public:
    // hop_s: time between frames.
    explicit VoicingPath(double hop_s, const PathCosts& costs = {}) : hop_s_(hop_s), costs_(costs) {}
    void push(const PitchFrame& frame, const FrameCandidates& candidates);
    void finish();                        // decodes every frame pushed since the last finish()
    bool pull(PitchFrame& out) noexcept;  // the decoded frames, in order

    // The state costs VoicingPath uses, for tests: state 0 unvoiced, state i + 1 candidate i.
    static double emission(const PathCosts& k, const FrameCandidates& c, std::size_t state) noexcept;
    static double transition(const PathCosts& k, const FrameCandidates& a, std::size_t from, const FrameCandidates& b,
                             std::size_t to) noexcept;

private:
    double hop_s_;
    PathCosts costs_;
    std::vector<PitchFrame> frames_;
    std::vector<FrameCandidates> cands_;
    std::vector<PitchFrame> out_;
    std::size_t next_ = 0;
};

}  // namespace beatless::pitch
