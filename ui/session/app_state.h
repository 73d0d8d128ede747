// AppState — what every screen shares: settings, the one live engine, the readings of the last seconds, the drone
// controls, drills' overrides and on-screen messages; simulated time for snapshots. Hearing safety lives here:
// no drone before the caution is acknowledged, a one-second fade in, the engine's limiter (DEVELOPERS.md).
// Thread: the one control thread (the window's or the snapshot's frame loop).
#pragma once

#include "audio/demo_performer.h"
#include "audio/device.h"
#include "audio/engine.h"
#include "pitch/measure/reading.h"
#include "pitch/theory/targets.h"
#include "ui/session/beat_pulse.h"
#include "ui/session/duo_verdict.h"
#include "ui/session/settings.h"
#include "ui/session/take_recording.h"
#include "ui/session/verdict.h"

#include <deque>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <vector>

namespace beatless::ui {

// Command-line choices that override the settings for this run (not saved).
struct AppOptions {
    bool demo = false;                     // the demo performer is the microphone
    std::optional<double> hold_dev_cents;  // demo hold mode: the chosen target at this deviation, no vibrato
    std::uint64_t seed = 7;                // demo performer seed
    bool simulated = false;                // snapshot: no audio thread, no devices; time advances by update()
    bool no_input = false;                 // no engine at all (snapshot without --demo)
    std::string input_device;              // overrides settings.input_device when not empty
    std::string output_device;             // overrides settings.output_device when not empty
    std::string root;                      // overrides [drone] root when not empty
    std::optional<double> a4_hz;           // overrides a4_hz
    std::optional<double> lowest_hz;       // overrides lowest_hz (checked by the command)
    std::string target_set;                // overrides [targets] set when not empty
    std::string target;                    // a fixed target ("7/5"): choice = fixed
    bool drone = false;                    // start the drone at once (acknowledges nothing: the caution still applies)
    bool save_settings = true;             // false: never write the settings file (snapshot)
    std::string drill;                     // the Drills screen chooses and starts this drill (a name or a .toml path)
    std::string listener;  // ear drills: a simulated listener answers: "perfect", "guess" or cents (demos, snapshots)
    bool log = true;       // attempts go to the practice log (false: kept in memory only)
    std::string log_file;  // the practice log; empty = the data folder's practice.sqlite3
    bool record = false;   // record a take from the start (--record)
    std::string take;      // the Review screen opens this sound file (a take or any file); empty = the newest take
    std::optional<int> review_note;       // ... selects this note (from 1)
    std::optional<double> review_span_s;  // ... and shows this many seconds around it
    int voices = 1;        // 2: two voices in one input (double stops, a duet) on the Practice screen
};

// The readings of the last seconds, oldest first, in a ring sized once.
class TraceStore {
public:
    explicit TraceStore(std::size_t capacity);
    void push(const pitch::Reading& r) noexcept;
    std::size_t size() const noexcept { return size_; }
    const pitch::Reading& at(std::size_t i) const noexcept;  // 0 = oldest
    const pitch::Reading* newest() const noexcept { return size_ ? &at(size_ - 1) : nullptr; }
    void clear() noexcept { size_ = 0; }

private:
    std::vector<pitch::Reading> ring_;
    std::size_t head_ = 0;  // next write
    std::size_t size_ = 0;
};

struct Message {
    std::string text;
    double shown_at_s = 0.0;  // app time when posted
    bool warning = false;     // shown with the warning colour and a "!" sign
};

class AppState {
public:
    static constexpr double kTraceSeconds = 12.0;  // kept; the trace shows the last 10 s
    static constexpr double kDroneFadeInS = 1.0;   // a starting drone rises from silence over this time

    // Loads the target set (a bad one falls back to the built-in 7-limit
    // with a message); starts nothing yet.
    AppState(Settings settings, std::filesystem::path settings_file, AppOptions options);
    ~AppState();
    AppState(const AppState&) = delete;
    AppState& operator=(const AppState&) = delete;

    // --- Frame ------------------------------------------------------------------
    void start();              // opens the engine (devices, demo); messages instead of throwing
    void update(double dt_s);  // see the header comment; call once per frame
    void shutdown();           // stops the engine and saves the settings
    // The one engine and its devices are the app's. The Ensemble screen has
    // it follow a group (the group's channels, the same drone) while it is
    // shown and one performer again when it is left: the engine reopens for
    // the other shape, on the same audio system. Messages instead of throwing;
    // false when the group's input cannot be opened (the screen shows no input).
    bool follow_group(const audio::EnsembleSetup& setup);
    void follow_performer();
    bool following_group() const { return group_.has_value(); }
    audio::Engine* engine() { return engine_.get(); }  // null without input
    double app_time_s() const { return app_time_s_; }

    // --- Settings -----------------------------------------------------------------
    const Settings& settings() const { return settings_; }
    const AppOptions& options() const { return options_; }
    const std::filesystem::path& settings_file() const { return settings_file_; }
    void set_screen(ScreenId id);
    void set_font_scale(float scale);
    void set_in_tune_cents(double cents);
    void set_lowest_hz(double hz);  // the live tracker's lowest f0: the engine is opened again
    void set_a4(double a4_hz);      // clamps to 400 .. 480
    void set_devices(const std::string& input, const std::string& output);                    // reopens the engine
    void set_midi(const std::string& out, const std::string& tuning, const std::string& in);  // MidiLink follows them
    void set_ensemble(const EnsembleSettings& e);  // the Ensemble screen's choices (saved like the rest)
    std::vector<audio::DeviceInfo> devices();      // empty when there is no audio system
    std::string input_text() const;                // "Demo performer", "USB mic (ALSA)", "no input"

    // --- Hearing caution and drone --------------------------------------------
    bool caution_needed() const { return !settings_.caution_acknowledged; }
    void acknowledge_caution();
    bool drone_on() const { return drone_on_; }
    bool drone_heard() const {
        return drone_heard_;
    }  // an output stream plays it (false for the demo without loudspeakers)
    // The drone sounds where the performer is: on, and played by an output
    // stream (or, in simulated time, rendered into the demo's simulated room).
    bool drone_sounding() const { return drone_on_ && (drone_heard_ || options_.simulated); }
    void set_drone_on(bool on);  // refused with a message before the caution is acknowledged
    void toggle_drone() { set_drone_on(!drone_on_); }
    void set_drone_level(double level_dbfs);  // clamped to -80 .. -6 dBFS
    void set_timbre(audio::Timbre t);
    void set_fifth(bool on);
    void set_octave(bool on);
    void step_root(int semitones);                       // note roots move by note, Hz roots by 2^(n/12)
    bool set_root_text(const std::string& text);         // "D3" or "146.8"; false (and a message) when not a frequency
    double root_hz() const { return engine_root_hz(); }  // the drill's root while one runs
    void sound_reference();                              // the reference voice sounds the current target

    // --- Targets ---------------------------------------------------------------------
    const pitch::TargetSet& targets() const { return set_; }
    bool set_target_set(const std::string& name);  // false (and a message) when it cannot be loaded
    void set_choice(TargetChoice c);
    void step_target(int by);                         // fixes the target and moves by `by` in the set
    int fixed_index() const { return fixed_index_; }  // the fixed target's index in targets()
    // The full set's index of a reading's target (fixed mode maps the engine's one-target set back).
    int target_index_of(const pitch::Reading& r) const;
    std::string target_ratio_text(const pitch::Reading& r) const;  // "7/5", or "14/5" an octave up
    std::string target_name_text(const pitch::Reading& r) const;   // "lesser septimal tritone" or ""

    // --- Readings ----------------------------------------------------------------------
    const TraceStore& trace() const { return trace_; }
    const Verdict& verdict() const { return verdict_.verdict(); }  // the screen's one verdict (ui/session/verdict.h)
    const pitch::Reading& current() const {
        return verdict_.verdict().reading;
    }  // the verdict's reading (see has_current)
    bool has_current() const {
        return verdict_.verdict().current();
    }  // the verdict is current (not silent, not unsure)
    bool clip_warning() const { return app_time_s_ - last_clip_s_ < 2.0; }
    double level_dbfs() const { return level_dbfs_; }  // newest frame's input level
    const BeatPulse& pulse() const { return pulse_; }
    audio::EngineStatus status() const;
    audio::DroneSettings drone_sent() const;  // what the engine's drone was last given (defaults without an engine)
    bool engine_running() const { return engine_ != nullptr; }
    double stream_time_s() const;

    // --- Two voices in one input (double stops, a duet) ---------------------------------
    // The Practice screen's two-voice view; the engine reopens in the other mode (the demo: the violinist).
    bool two_voices() const { return voices_ == 2; }
    void set_two_voices(bool on);
    const DuoVerdict& duo() const { return duo_.verdict(); }
    const DuoTrace& duo_trace() const { return duo_trace_; }

    // --- Drills ------------------------------------------------------------------------------
    // The drill's drone (root, fifth, timbre; its level never above the
    // user's) replaces the settings' and starts with the usual fade. False
    // (and a message) before the caution is acknowledged.
    // name: the drill as load_drill finds it again (a built-in name or a file), for a take's sidecar.
    bool begin_drill(const audio::DroneSettings& drone, const std::string& name = "");
    void set_drill_targets(const pitch::TargetSet& targets);  // readings against these while the drill runs
    void end_drill();                                         // the settings' root, targets and drone state again
    bool drill_active() const { return drill_drone_.has_value(); }
    // The reference voice sounds freq_hz for dur_s. False when it cannot be
    // heard (caution not acknowledged, no engine, or no output device).
    bool sound_tone(double freq_hz, double dur_s);
    // A recorded clip (RMS 1 = the drone's level) played once through the output (audio/engine.h, play_clip), the
    // live drone hushed meanwhile. False when it cannot be heard, as for sound_tone.
    bool play_clip(std::span<const float> samples, double rate_hz);
    void stop_clip();
    bool clip_playing() const;
    // Demo only: the performer sings these notes, from stream time 0 (the
    // engine reopens). False without the demo. An empty list: her usual round.
    bool sing_script(std::vector<audio::DemoNote> notes);

    // --- Takes ---------------------------------------------------------------------------------
    // Records what the engine hears (each analysed channel, before drone removal) as a take in the data folder's
    // takes/ (ui/session/take_recording.h). Messages instead of throwing; stopped when the engine reopens, when the
    // recorder stops by itself (disk nearly full) and at shutdown. Takes cut short earlier are recovered at start().
    void start_recording();
    void stop_recording();
    void toggle_recording() { recording() ? stop_recording() : start_recording(); }
    bool recording() const { return take_ != nullptr; }
    double recording_s() const { return take_ ? take_->elapsed_s() : 0.0; }  // seconds recorded so far
    std::string recording_name() const;  // the take's file name without .flac ("2026-12-03_161502"); "" when none

    // --- Messages ------------------------------------------------------------------------
    void post(const std::string& text, bool warning = false);  // also printed to stderr
    const std::deque<Message>& messages() const { return messages_; }

private:
    void open_engine();
    void close_engine();
    pitch::TargetSet engine_targets() const;  // the set, or the fixed target alone
    const pitch::TargetSet& reading_set() const;
    pitch::ReadingConfig reading_config() const;
    audio::DroneSettings drone_settings(double level_dbfs) const;
    void apply_readings();
    void apply_drone();
    void changed();  // settings changed: save soon
    void pump_simulation(double dt_s);
    void take(const pitch::Reading& r);
    void recompute_root();
    double engine_root_hz() const { return drill_drone_ ? drill_drone_->root_hz : root_hz_; }
    bool refuse_in_drill(const char* what);

    Settings settings_;
    std::filesystem::path settings_file_;
    AppOptions options_;
    pitch::TargetSet set_;
    int fixed_index_ = 0;
    double root_hz_ = 110.0;

    std::unique_ptr<audio::AudioSystem> system_;
    bool system_tried_ = false;
    std::unique_ptr<audio::Engine> engine_;
    std::string drill_name_;                               // the drill running (begin_drill), for takes
    std::unique_ptr<audio::DemoPerformer> sim_performer_;  // simulated time: what the engine's demo would play
    std::vector<float> sim_block_;
    double sim_due_s_ = 0.0;
    std::string input_text_ = "no input";

    TraceStore trace_;
    std::vector<pitch::Reading> take_buf_;
    VerdictTracker verdict_;
    double last_clip_s_ = -1e9;
    double level_dbfs_ = -INFINITY;
    BeatPulse pulse_;

    std::optional<audio::DroneSettings> drill_drone_;  // while a drill runs
    std::optional<pitch::TargetSet> drill_targets_;
    bool drone_on_before_drill_ = false;
    std::vector<audio::DemoNote> demo_script_;
    std::optional<audio::EnsembleSetup> group_;  // the engine follows a group (Ensemble screen)
    int voices_ = 1;                             // 2: the engine follows two voices in one input
    DuoVerdictTracker duo_;
    DuoTrace duo_trace_;
    std::vector<pitch::TwoVoiceFrame> duo_buf_;

    bool drone_on_ = false;
    bool drone_heard_ = false;
    double fade_s_ = 0.0;  // time since the drone started (fade-in while < kDroneFadeInS)
    double supervise_s_ = 0.0;
    bool dirty_ = false;
    double dirty_since_s_ = 0.0;
    double app_time_s_ = 0.0;
    std::deque<Message> messages_;
    std::unique_ptr<TakeRecording> take_;  // the take being recorded
    bool takes_recovered_ = false;         // recover_takes() ran (once, at the first start())
    bool record_pending_ = false;          // --record: start at the second update()
    std::uint64_t updates_ = 0;            // update() calls so far
};

}  // namespace beatless::ui
