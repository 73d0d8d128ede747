// Take clips — what the Review screen plays of one held note: the recorded samples of the note (with a little
// before and after), alone, with the take's drone, or followed by the exact target tone. Each part is scaled to RMS 1,
// which the engine plays at the drone's level (audio/engine.h, play_clip).
// Method: the note's frames read from the take (audio/soundfile.h, seek); the drone regenerated from the sidecar
// (ui/session/take_file.h) or, when the microphone heard it, the recorded one; the target by audio/synth.h at the
// reference voice's timbre (soft) — the timbre T and P use.
// Thread: any (the Review screen makes clips on its worker). Allocates: yes. Throws Error naming the file.
#pragma once

#include "ui/session/take_analysis.h"

#include <cstdint>
#include <string_view>
#include <vector>

namespace beatless::ui {

enum class ClipKind {
    note,         // the recorded note alone (a drone the microphone heard stays in it)
    with_drone,   // the note with its drone: the recorded one when the microphone heard it, else regenerated
    then_target,  // the note, a short gap, then its exact target at the reference voice's timbre
};
std::string_view clip_kind_words(ClipKind kind);  // "the note", "the note with its drone", ...

inline constexpr double kClipMarginS = 0.15;  // recorded audio kept before and after the note
inline constexpr double kClipMaxS = 20.0;     // longer notes are cut to their first 20 s
inline constexpr double kClipGapS = 0.25;     // then_target: silence between the note and the target

struct NoteClip {
    std::vector<float> samples;      // mono at rate_hz, RMS 1 = the drone's level
    double rate_hz = 0.0;            // the take's rate
    std::int64_t first_frame = 0;    // the take's frame of samples[0]
    std::int64_t note_frames = 0;    // how many of samples are the recording (the rest: gap and target)
    double voice_gain = 1.0;         // what the recorded samples were multiplied by (1 / their RMS)
    bool drone_regenerated = false;  // with_drone: the drone is the sidecar's, rendered again
    bool drone_recorded = false;     // with_drone: the drone is the one the microphone heard
};

// The clip of take.analysis.notes[note]. Throws Error (a take that cannot be read, a note out of range, a drone
// that cannot be regenerated, or a note without a target for then_target).
NoteClip make_note_clip(const ReviewedTake& take, std::size_t note, ClipKind kind);

}  // namespace beatless::ui
