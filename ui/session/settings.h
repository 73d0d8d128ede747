// Settings — the performer's preferences, kept between runs as a TOML file.
//
// settings.toml in the config folder (ui/session/paths.h) holds our own keys:
//   kind = "settings"; caution_acknowledged; a4_hz; font_scale;
//   in_tune_cents; input_device; output_device; midi_out; midi_tuning; midi_in; [drone] root, timbre,
//   level_dbfs, fifth, octave; [targets] set; [ensemble] chord, reference, input_device, channels, names,
//   voices (the Ensemble screen). A missing file gives the defaults silently. A malformed file
//   never stops the program: a syntax error gives the defaults, a bad value
//   gives that value's default, and in both cases one warning line names
//   the file and line ("settings.toml:7: 'level_dbfs' ..."). Saving writes
//   a temporary file and renames it over the old one.
#pragma once

#include "audio/drone.h"
#include "audio/timbre.h"
#include "pitch/theory/chord.h"
#include "ui/session/paths.h"
#include "ui/session/screen_id.h"

#include <filesystem>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

enum class TargetChoice {
    nearest,  // the target nearest the voice (the reading's choice)
    fixed,    // one target of the set, chosen by the performer
};

// The Ensemble screen's choices ([ensemble]); lists as ui/session/ensemble_plan.h reads them.
struct EnsembleSettings {
    std::string chord = "harmonic-seventh";  // chord text or built-in name; its root is the drone root
    pitch::ChordReference reference = pitch::ChordReference::best_fit;  // what deviations are measured against
    std::string input_device;  // the multi-channel input; "" = the default input
    std::string channels;      // "1,2,3,4" (from 1); "" = 1, 2, ...
    std::string names;         // "Bass,Tenor,Alto,Soprano"; "" = the chord's parts
    std::string voices;        // "1,2,3,4" (1 = lowest); "" = 1, 2, ...

    friend bool operator==(const EnsembleSettings&, const EnsembleSettings&) = default;
};

inline constexpr double kDefaultLowestHz = 60.0;  // Settings::lowest_hz by default: audio::kLiveLowestHz

struct Settings {
    // Session state: lives while the window is open, never saved (a window's
    // last screen or fixed target must not change what a later run shows).
    ScreenId screen = ScreenId::practice;  // screen shown
    bool caution_acknowledged = false;     // the hearing caution was confirmed on screen
    double a4_hz = 440.0;                  // 12-TET reference, 400 .. 480 Hz (default ISO 16)
    float font_scale = 1.0f;               // text size on top of the display's DPI scale, 0.5 .. 3 (default 1)
    double in_tune_cents = 5.0;            // |deviation| counted as in tune, 1 .. 25 cents (default 5, common practice)
    double lowest_hz = kDefaultLowestHz;   // lowest f0 the live screens track, 30 .. 200 Hz (default 60: voices and
                                           // strings down to a cello's C, notes under 70 Hz read with a longer window;
                                           // 55 for a low bass voice, 38 for a double bass)
    std::string input_device;              // index or unique name part; "" = the default input
    std::string output_device;             // the same for the drone's output
    std::string midi_out;             // MIDI port for the drone on a synth; "" = none (beatless devices lists them)
    std::string midi_tuning = "mts";  // how midi_out retunes: "mts" (MIDI Tuning Standard) or "bend" (default mts)
    std::string midi_in;              // MIDI keyboard port that sets the root; "" = none
    // [drone]
    std::string root = "A2";                          // note name ("A2") or Hz ("110"); default A2 = 110 Hz at A4 440
    audio::Timbre timbre = audio::Timbre::round;      // default round
    double level_dbfs = audio::kDroneStartLevelDbfs;  // RMS dBFS, -80 .. -6 (default -30)
    bool fifth = false;                               // add 3/2 (default off)
    bool octave = false;                              // add 2/1 (default off)
    // [targets]
    std::string target_set = "7-limit";           // built-in name or a .toml path
    TargetChoice choice = TargetChoice::nearest;  // session state, not saved
    std::string fixed_target;  // session state, not saved: the fixed target ("7/5"); "" = the set's first
    // [ensemble]
    EnsembleSettings ensemble;

    friend bool operator==(const Settings&, const Settings&) = default;
};

// The range of Settings::lowest_hz (and of --lowest).
inline constexpr double kLowestMinHz = 30.0;
inline constexpr double kLowestMaxHz = 200.0;

struct LoadedSettings {
    Settings settings;
    std::string warning;  // one line naming file and line, or empty
};

std::filesystem::path settings_path(const EnvLookup& env = process_env());  // config / "settings.toml"

// Reads the file; never throws for its content (see above).
LoadedSettings load_settings(const std::filesystem::path& file);
LoadedSettings parse_settings(std::string_view text, const std::string& source);

std::string settings_toml(const Settings& s);  // the file's text
// Writes the file (creating the folder). Throws Error naming the file.
void save_settings(const std::filesystem::path& file, const Settings& s);

std::string_view target_choice_key(TargetChoice c);  // "nearest", "fixed"

// The preferences in `s` that differ from the defaults, as "A4 442 Hz",
// "lowest note 55 Hz", ... (for the line a window prints on start).
std::vector<std::string> changed_preferences(const Settings& s);

}  // namespace beatless::ui
