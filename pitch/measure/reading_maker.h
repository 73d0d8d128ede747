// ReadingMaker — turns tracker frames (pitch/dsp/yin.h) into readings against the root (pitch/measure/reading.h).
// Method: cents 1200 log2 (Ellis 1885); the vibrato centre (pitch/dsp/vibrato.h) chooses the nearest target; beat rates
// |q f_voice - p f_root| (Helmholtz; pitch/theory/beats.h). What a reading holds: DEVELOPERS.md, "Methods in detail".
// Thread: the analysis thread (make()). Allocates: in the constructor only. Locks: no.
#pragma once

#include "pitch/dsp/vibrato.h"
#include "pitch/dsp/yin.h"
#include "pitch/measure/reading.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/targets.h"

#include <cstdint>
#include <vector>

namespace beatless::pitch {

struct ReadingConfig {
    double root_hz = 110.0;         // the drone's fundamental (default A2)
    double a4_hz = 440.0;           // 12-TET reference (default ISO 16: 440 Hz)
    bool octave_equivalent = true;  // 7/5 also matches 14/5, 7/10 ... (default on)
    double jump_cents = 60.0;       // frame-to-frame jump that starts a new note (default 60 cents)
    double new_note_cents = 15.0;   // held this far beyond the vibrato's swing from the centre ... (default 15 cents)
    int new_note_frames = 4;        // ... for this many frames, a new note starts (default 4)
    VibratoConfig vibrato;          // whole-cycle centre and steadiness settings
    AudibleRange audible;           // which partials can be heard beating (set partials_a from the drone's timbre)
};

class ReadingMaker {
public:
    ReadingMaker(const ReadingConfig& config, TargetSet targets);  // throws Error on an empty set or a bad root

    // The reading for one frame; sample_index is the input sample at f.t_s.
    // Thread: analysis. Allocates: no. Locks: no.
    Reading make(const PitchFrame& f, std::int64_t sample_index) noexcept;

    void set_root_hz(double root_hz) noexcept;  // restarts the note (ignored when not 1 Hz .. 20 kHz)
    void reset() noexcept;                      // forget the note in progress
    double root_hz() const noexcept { return cfg_.root_hz; }
    std::uint64_t notes_started() const noexcept { return notes_; }  // new notes detected without a silence
    const TargetSet& targets() const noexcept { return set_; }
    const ReadingConfig& config() const noexcept { return cfg_; }

private:
    struct BeatRatio {
        std::int64_t p = 1, q = 1;  // coinciding partials of the unshifted target: root p, voice q
        bool exact = true;          // the target is a ratio (false: a cents target beating like p/q)
    };
    ReadingConfig cfg_;
    TargetSet set_;
    std::vector<BeatRatio> beat_;
    VibratoCentre vibrato_;
    double prev_cents_ = NAN;
    int far_frames_ = 0;
    std::uint64_t notes_ = 0;
};

// The partial pair (root partial p, voice partial q) that coincides for
// target `t` moved by `octaves`; false when it would overflow. Allocates: no.
bool coinciding_partials(const Interval& t, int octaves, std::int64_t& p, std::int64_t& q) noexcept;

}  // namespace beatless::pitch
