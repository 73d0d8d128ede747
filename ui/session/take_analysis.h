// Take analysis — the passes `beatless analyze` makes over a sound file, in memory that does not grow with the file.
// Method: one voice: find the drone (pitch/measure/root_detect.h), comb it out (pitch/dsp/drone_comb.h), track the
// voice (pitch/dsp/yin.h), cut held notes (pitch/measure/segment.h); two voices: pitch/measure/two_voice.h into
// dyads (pitch/measure/dyad_segment.h). Passes, memory and errors: DEVELOPERS.md, "Methods in detail".
// Thread: the caller's (the analyze command's). Allocates: yes. Throws Error with a one-line message naming the file.
#pragma once

#include "audio/soundfile.h"
#include "pitch/dsp/signal_facts.h"
#include "pitch/measure/decimated_trace.h"
#include "pitch/measure/dyad_segment.h"
#include "pitch/measure/intent.h"
#include "pitch/measure/partial_voice.h"
#include "pitch/measure/root_detect.h"
#include "pitch/measure/segment.h"
#include "pitch/theory/targets.h"

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace beatless::ui {

struct AnalysisRequest {
    std::string path;                 // the sound file
    int channel = -1;                 // -1 mixes all channels; 0.. picks one
    std::optional<double> root_hz;    // one voice: the drone's root; empty = find it
    pitch::TargetSet targets;         // must not be empty
    bool keep_trace = false;          // fill the decimated trace (for the report)
    std::optional<double> lowest_hz;  // one voice: the tracker's floor (default a semitone under the root, 41-55 Hz)
    std::vector<int> expected;        // targets meant, in order (indices into targets); empty: none, one: every note
    pitch::IntentConfig intent;       // the alignment's costs and the between-targets limit
    // The drone comb's feedback g (pitch/dsp/drone_comb.h), 0 .. 0.99; 0 = feedforward (default). With g > 0 each
    // note's end is placed from the feedforward comb's level (pitch/measure/note_end.h). Why it stays 0:
    // DEVELOPERS.md, ui/session/take_analysis.h.
    double comb_feedback = 0.0;
};

// What was heard when nothing (or little) was found: the level and the estimated signal-to-noise ratio of what the
// tracker heard (the drone removed).
struct HeardLevels {
    double loudest_dbfs = -INFINITY;  // RMS of the loudest block of the file
    double floor_dbfs = -INFINITY;    // 10th percentile of the tracked signal's block RMS
    double snr_db = INFINITY;         // estimated from the spread of block levels (pitch/dsp/signal_facts.h)
};

// Called with the share of the whole job done (0..1) and the pass's name.
using ProgressFn = std::function<void(double fraction, const char* stage)>;

struct OneVoiceAnalysis {
    audio::SoundInfo info;
    bool root_given = false;
    pitch::RootEstimate root;  // the drone detection (status may be no_steady_root when a root is given)
    double root_hz = 0.0;      // the root the notes are measured against
    double drone_hz = 0.0;     // the drone the comb removed, 0 when none was found
    double hop_s = 0.0;        // tracker hop
    std::vector<pitch::NoteResult> notes;
    std::vector<std::int64_t> notes_clipped;    // per note: samples at full scale during it
    std::vector<pitch::NoteJudgement> judged;   // per note: against the target meant (or the nearest, or between)
    std::vector<pitch::TargetSummary> summary;  // per judged target
    std::size_t short_notes_dropped = 0;
    HeardLevels heard;
    pitch::SignalFacts facts;
    pitch::DecimatedTrace trace;  // cents above the root (when keep_trace)
    // Steady voices the drone comb hid: each on a partial of the drone (330 Hz over 110 Hz), found by their level
    // (pitch/measure/partial_voice.h); their pitch is the partial's, not measured apart from the drone.
    std::vector<pitch::PartialVoice> on_partials;
};

struct TwoVoiceAnalysis {
    audio::SoundInfo info;
    double hop_s = 0.0;
    // A steady drone found in the file is one of the two voices: it is combed out and the other voice is measured
    // against it (as with one voice), so none of its partials is taken for a voice. 0 when none was found.
    double drone_hz = 0.0;
    std::vector<pitch::DyadResult> dyads;
    std::vector<pitch::NoteJudgement> judged;  // per dyad, as for notes
    std::vector<pitch::TargetSummary> summary;
    std::size_t short_dyads_dropped = 0;
    HeardLevels heard;
    pitch::SignalFacts facts;
    pitch::DecimatedTrace trace;                   // interval in cents, high above low (when keep_trace)
    std::vector<pitch::PartialVoice> on_partials;  // a drone found: voices it hid on its partials (as one voice's)
    // Each voice (when keep_trace), in cents above ref_hz: the root given, or the drone found, else 55 Hz (A1).
    double ref_hz = 55.0;
    pitch::DecimatedTrace low_trace, high_trace;
};

// Throws Error: file problems (audio/soundfile.h), "FILE: silent ...", and
// when the root is to be found "FILE: no steady drone or pedal tone found ...".
// The reader (opened once with the request's path and channel, blocks of
// kAnalysisBlockFrames) must be seekable: the one-voice analysis reads it twice.
OneVoiceAnalysis analyze_one_voice(audio::SoundReader& reader, const AnalysisRequest& request,
                                   const ProgressFn& progress = {});
TwoVoiceAnalysis analyze_two_voices(audio::SoundReader& reader, const AnalysisRequest& request,
                                    const ProgressFn& progress = {});
// The same, opening the request's file.
OneVoiceAnalysis analyze_one_voice(const AnalysisRequest& request, const ProgressFn& progress = {});
TwoVoiceAnalysis analyze_two_voices(const AnalysisRequest& request, const ProgressFn& progress = {});
inline constexpr std::size_t kAnalysisBlockFrames = 4096;

// The level below which a file counts as silent (same as the analyzers').
constexpr double kSilenceDbfs = -60.0;

// [SECTION] A take's context

// What a take's sidecar (ui/session/take_file.h) beside a sound file says about analyzing it.
struct TakeDefaults {
    bool found = false;           // a sidecar was beside the file
    std::string targets;          // its target set ("" when it names none)
    std::string root;             // its root as typed ("A2"), else in Hz; "" when unknown
    std::optional<double> a4_hz;  // its A4
    int voices = 1;               // 2: recorded as two voices
    std::string expect;  // what was meant: its fixed target, or a hold drill's targets in sequence ("7/5,10/7")
};
// Throws Error (a sidecar that does not read, a drill that does not load).
TakeDefaults take_defaults(const std::string& audio_path);

// The targets of a list such as "7/5,10/7" as indices into the set; targets the set lacks are added to it.
// Throws Error naming the list (an empty item) or the interval.
std::vector<int> expected_targets(const std::string& list, pitch::TargetSet& set);

// [SECTION] A take reviewed

// One voice reviewed the way `analyze` does it by default, with the trace kept (the Review screen).
struct ReviewedTake {
    int voices = 1;        // 2: reviewed as two voices (duo below; analysis stays empty)
    std::string path;      // the sound file
    std::string title;     // its file name
    std::string set_name;  // the target set analysed against
    pitch::TargetSet set;  // ... with --expect's extra targets
    std::string expect;    // what was meant ("" = nearest)
    double a4_hz = 440.0;
    OneVoiceAnalysis analysis;
    TwoVoiceAnalysis duo;
    std::string error;  // one line when it could not be analysed (the rest is then empty)
};
// Never throws: a failure is kept in `error`. default_set is used when no sidecar names one. Whatever `progress`
// throws that is not a std::exception (a cancellation) goes through.
// voices: 1 or 2, or 0 for what the sidecar says (one voice without one).
ReviewedTake review_take(const std::string& path, const std::string& default_set, const ProgressFn& progress = {},
                         int voices = 0);

}  // namespace beatless::ui
