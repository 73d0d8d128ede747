// Intent — each held note judged against the target the performer meant, and flagged when it lies between targets.
// Method: the notes are aligned in order with the expected sequence (repeated as often as the take needs) by a
// least-cost alignment (Needleman and Wunsch, J. Mol. Biol. 48(3), 1970): pairing a note with an expected target costs
// its distance in cents (at the nearest octave), leaving a target out skip_target_cents, leaving a note out (a note
// sung is surely meant as something) skip_note_cents, and targets after the last note nothing (the take stopped).
// A note meant nothing and farther than between_cents from every target is "between targets". A note whose dropouts
// may have moved its centre more than unsure_cents (NoteResult::dropout_bias_cents), or whose pitch was heard for less
// than min_heard_share of its time, is "unsure": judged against nothing, its deviation not given, rather than a wrong
// one (a voice fading in and out in noise).
// Thread: any. Allocates: yes (the alignment table, notes x expected).
#pragma once

#include "pitch/theory/targets.h"

#include <cmath>
#include <span>
#include <vector>

namespace beatless::pitch {

struct IntentConfig {
    double between_cents = 25.0;      // a note meant nothing and farther than this from every target is "between
                                      //   targets" (default 25 cents: a quarter of a semitone, common practice)
    double skip_target_cents = 50.0;  // cost of an expected target no note was paired with (default 50 cents)
    double skip_note_cents = 100.0;   // cost of a note paired with nothing (default 100 cents: a note more than
                                      //   150 cents from the target due is taken as not meant)
    bool octave_equivalent = true;    // targets match in every octave (default on)
    double unsure_cents = 1.0;        // a note whose dropouts may have moved its centre further is not judged (default
                                      //   1 cent: half the 2 c a review must be right within, the rest its scatter)
    double min_heard_share = 0.65;    // ... nor one whose pitch was heard for less of its time than this (default
                                      //   0.65: in noise at 0 dB a note heard 60 % of the time read 2.4 c off while
                                      //   its dropout estimate said under 1 c; notes heard 70 % and more stayed
                                      //   within 1.7 c)
};

struct NoteJudgement {
    int meant_index = -1;             // into the TargetSet: the target meant; -1 when nothing was expected of it
    int meant_octaves = 0;            // octave shift of the meant target (the nearest to the note)
    double meant_target_cents = NAN;  // the meant target after the shift
    double meant_dev_cents = NAN;     // note minus the meant target: + is sharp
    TargetMatch nearest;              // the nearest target of the set, whatever was meant
    bool nearer_other = false;        // something was meant and another target lies nearer
    bool between = false;             // nothing meant, and every target is farther than between_cents
    double unsure_cents = NAN;        // the note's centre may be off by this much (its dropouts): not judged; NaN: sure
    double unsure_heard = NAN;        // the share of the note's time its pitch was heard, when under min_heard_share:
                                      //   not judged; NaN: heard enough
    bool unsure() const noexcept { return std::isfinite(unsure_cents) || std::isfinite(unsure_heard); }
    // The target the note is judged against: the meant one, else the nearest unless between (-1); none when unsure.
    int judged_index() const noexcept {
        if (unsure()) return -1;
        return meant_index >= 0 ? meant_index : (between ? -1 : static_cast<int>(nearest.index));
    }
    int judged_octaves() const noexcept { return meant_index >= 0 ? meant_octaves : nearest.octaves; }
    double judged_dev_cents() const noexcept {
        if (unsure()) return NAN;
        return meant_index >= 0 ? meant_dev_cents : (between ? NAN : nearest.dev_cents);
    }
    double judged_target_cents() const noexcept {
        if (unsure()) return NAN;
        return meant_index >= 0 ? meant_target_cents : (between ? NAN : nearest.target_cents);
    }
};

// The target `index` of the set at the octave nearest to measured_cents.
TargetMatch match_target(const TargetSet& set, std::size_t index, double measured_cents, bool octave_equivalent);

// Judges notes (cents above the root, in time order) against `expected` (indices into `set`, in the order the
// performer meant them; empty: nothing expected, one: every note meant it). The set must not be empty; indices out
// of range throw Error.
std::vector<NoteJudgement> judge_notes(const TargetSet& set, std::span<const double> note_cents,
                                       std::span<const int> expected, const IntentConfig& config = {});

// Marks a judged note unsure when its dropouts may have moved its centre more than config.unsure_cents, or when its
// pitch was heard for less than config.min_heard_share of its time (heard_share, 0..1).
void judge_dropouts(NoteJudgement& judged, double dropout_bias_cents, double heard_share = 1.0,
                    const IntentConfig& config = {});

}  // namespace beatless::pitch
