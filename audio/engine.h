// Engine — the one live engine: one to N input channels, one drone, one device owner.
//
//   capture callback ──▶ one SpscRing per analysed channel ──▶ analysis thread: per channel
//   (device, demo, file)   (copied, nothing else)               drone removal ─▶ YinTracker, then
//                                                                one performer: ReadingMaker ─▶ Reading
//                                                                a group: EnsembleAnalyzer ─▶ EnsembleReading
//   playback callback ◀── Drone (audio/drone.h)                 ─▶ Latest / Recent / stream
//
// Thread: setup and control from one control thread; the callbacks and the
// analysis follow the real-time rules (DEVELOPERS.md, "Live engine").

#pragma once

#include "audio/demo_duo.h"
#include "audio/demo_ensemble.h"
#include "audio/demo_performer.h"
#include "audio/device.h"
#include "audio/drone.h"
#include "audio/drone_removal.h"
#include "audio/latest.h"
#include "audio/live_io.h"
#include "audio/ring.h"
#include "audio/room.h"
#include "pitch/measure/ensemble_analyzer.h"
#include "pitch/measure/reading.h"
#include "pitch/measure/reading_maker.h"
#include "pitch/measure/two_voice.h"

#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <thread>

namespace beatless::audio {

class TakeRecorder;

// The live tracker's lowest f0 by default for one performer: under the cello's open C (C2, 65.4 Hz from A4 = 440 Hz,
// ISO 16) by a semitone and a little, for a C string tuned flat or a vibrato below it.
inline constexpr double kLiveLowestHz = 60.0;
// One performer live, the short (30 ms) window's floor. Below it a second tracker with the longer window the floor
// needs runs beside it and takes over while a note under kLiveShortFloorHz sounds (engine.cpp, LowFloor): readings
// at and above 100 Hz keep the short window's settling.
inline constexpr double kLiveShortFloorHz = 70.0;

struct EngineConfig {
    double sample_rate_hz = 0.0;         // device rate to ask for (0 = negotiate; the demos use 48 000)
    std::size_t block_len_frames = 256;  // frames per callback asked for (default 256)
    double hop_s = 0.005;                // tracker hop (default 5 ms)
    double span_s = 0.0;                 // most audio one tracker frame depends on (0 = 30 ms for one performer live,
                                         // with a longer second window for notes under 70 Hz; 50 ms for a file or a
                                         // group, or longer when f_min_hz needs it)
    double f_min_hz = 0.0;  // lowest f0 tracked (0 = 60 Hz for one performer live, 41 Hz for a file, 55 Hz for a group)
    double f_max_hz = 1600.0;       // highest f0 tracked (default 1600 Hz)
    double ring_s = 2.0;            // each channel's capture ring (default 2 s)
    bool drone_removal = true;      // remove the drone's partials before tracking (default on)
    CancellerConfig canceller;      // drone removal settings (rate filled in by the engine)
    RoomConfig demo_room;           // how the demo performer's microphone hears the drone
    double stall_s = 1.0;           // no callbacks for this long: the device is gone (default 1 s)
    double first_callback_s = 3.0;  // a stream just opened may call back this late (ALSA's pulse plugin on
                                    // an idle sink's monitor: ~1 s after the start; default 3 s)
    double reopen_every_s = 1.0;    // retry period while a device is gone (default 1 s)
};

// What a group is tuning: the chord, the players on their channels, the analysis settings.
struct EnsembleSetup {
    pitch::Chord chord;                  // the chord being tuned
    std::vector<pitch::Player> players;  // names, voices, channels (1 to 8)
    pitch::EnsembleConfig analysis;      // root, A4, thresholds (hop_s is the engine's)
};

// What the engine analyses: one performer (Reading), a group (EnsembleReading),
// or two voices in one input, a double stop or a duet (TwoVoiceFrame).
enum class EngineMode { performer, ensemble, two_voices };

struct EngineStatus : LiveStatus {
    EngineMode mode = EngineMode::performer;
    int channels = 0;                        // channels delivered by the input
    int players = 0;                         // channels analysed (1 for one performer)
    std::uint64_t captured_frames = 0;       // into the rings
    std::uint64_t analyzed_frames = 0;       // out of the rings
    std::uint64_t ring_overflow_frames = 0;  // dropped because the rings were full
    double tracker_delay_s = 0.0;            // part of the latency the tracker needs by design
    double device_input_latency_s = 0.0;     // host-reported, not included in the latency
    double device_output_latency_s = 0.0;
    bool output_ok = false;  // output stream running (or none asked for)
};

class Engine final : private StreamCallbacks {
public:
    // system may be null when only a demo or a file is used.
    Engine(const EngineConfig& config, AudioSystem* system);
    ~Engine() override;
    Engine(const Engine&) = delete;
    Engine& operator=(const Engine&) = delete;

    // --- What to analyse (control thread) --------------------------------------
    // One performer: readings against this root and target set (also while running).
    void set_readings(const pitch::ReadingConfig& config, pitch::TargetSet targets);
    // A group. Before start: any setup. While running a group: a new chord,
    // root, names or voices for the same players on the same channels (else throws Error).
    void set_ensemble(EnsembleSetup setup);
    // Two voices in one input (channel 1): both pitches, their interval against
    // the set and the beat of its coinciding partials, predicted and measured.
    // The config's rate is the input's (filled in); also while running.
    void set_two_voices(const pitch::TwoVoiceConfig& config, pitch::TargetSet targets);
    EngineMode mode() const { return mode_; }
    const EnsembleSetup& ensemble_setup() const { return setup_; }

    // --- Input and output (control thread, before start) -----------------------
    // A device (index or unique name part; "" = the default), opened in
    // start(); a group's channels must exist on it (one line naming the
    // device and the counts otherwise), so choose the group first.
    void open_input_device(std::string_view spec);
    void open_output_device(std::string_view spec);  // the drone plays here
    void use_demo(DemoConfig demo);                  // the demo performer is the microphone
    void use_demo(DemoEnsembleConfig demo);          // the demo ensemble (voices, channels from the setup when empty)
    void use_demo(DemoDuoConfig demo);               // the demo violinist's double stops (two voices)
    double use_file(const std::string& path);        // returns the file's rate; throws Error naming it
    void set_input_has_drone(bool on);               // file: the recording holds a drone at the root
    void start(bool analysis_thread = true);         // false: the caller runs analyze_available()
    void stop();                                     // joins threads, closes streams
    // File only: drives the whole file through the rings and analysis in the
    // calling thread as fast as possible; on_reading sees every reading.
    void run_fast(const std::function<void(const pitch::Reading&)>& on_reading, double max_s = 0.0);
    void run_fast(const std::function<void(const pitch::EnsembleReading&)>& on_reading, double max_s = 0.0);
    void run_fast(const std::function<void(const pitch::TwoVoiceFrame&)>& on_reading, double max_s = 0.0);
    // Demo only, after start(false): renders this many frames and analyses
    // them in the calling thread (simulated time, as `beatless snapshot` runs). Allocates: no.
    void run_demo_frames(std::size_t frames) noexcept;

    // --- Control (control thread, any time) -------------------------------------
    void set_drone(const DroneSettings& s);  // throws Error on out-of-range values
    const DroneSettings& drone() const { return drone_; }
    void set_root_hz(double root_hz);  // drone and readings together
    void sound_reference();            // the reference voice sounds the current target once
    // The reference voice sounds freq_hz for dur_s (drills: the announced
    // target, ear questions), 3 dB under the drone's level, with 50 ms fades;
    // a tone asked for while one sounds glides to the new pitch over 50 ms.
    // Throws Error on a frequency outside 20 Hz .. 5 kHz or a length outside 0.1 .. 30 s.
    void sound_tone(double freq_hz, double dur_s);
    // Plays a recorded clip once through the output, mixed in before the drone's limiter (audio/clip_player.h): mono
    // samples at rate_hz, RMS 1 standing for the drone's level (the caller normalises), resampled to the output's rate
    // here, faded in and out over 30 ms; hush_drone fades the live drone out while it sounds. False when there is no
    // output to hear it on. Throws Error on an empty clip or one longer than 60 s.
    bool play_clip(std::span<const float> samples, double rate_hz, bool hush_drone);
    void stop_clip();                // fades out what plays
    bool clip_playing() const;       // a clip sounds or waits to (any thread)
    double clip_position_s() const;  // seconds of it played
    void supervise();                // watchdog, reopening, a group's channel messages; every ~100 ms
    // Recording: from the next callback every analysed channel, as it came in (before drone removal), is copied to
    // `r` (audio/take_recorder.h), one recorder channel per analysed channel; drone changes are noted in it. nullptr
    // detaches, waiting until no callback uses the old one. Costs one relaxed atomic load per callback when none.
    void set_tap(TakeRecorder* r);
    // The output drone's phases at the first block it rendered after set_tap(r) (nullopt before that block, or with
    // no output): what a take needs to render its drone again as it sounded, already going, when the take began.
    std::optional<DronePhases> drone_phases_at_tap() const;
    void on_message(std::function<void(const std::string&)> f) { message_ = std::move(f); }

    // --- Readings and status ------------------------------------------------------
    // The newest reading (one reader; false if none new), the last readings
    // oldest first (any thread), every reading in order (one reader). The
    // Reading forms serve one performer, the EnsembleReading forms a group,
    // the TwoVoiceFrame forms two voices.
    bool latest(pitch::Reading& out);
    bool latest(pitch::EnsembleReading& out);
    bool latest(pitch::TwoVoiceFrame& out);
    std::size_t history(std::span<pitch::Reading> out) const;
    std::size_t history(std::span<pitch::EnsembleReading> out) const;
    std::size_t history(std::span<pitch::TwoVoiceFrame> out) const;
    std::size_t take_readings(std::span<pitch::Reading> out);
    std::size_t take_readings(std::span<pitch::EnsembleReading> out);
    std::size_t take_readings(std::span<pitch::TwoVoiceFrame> out);
    EngineStatus status() const;
    double sample_rate_hz() const { return rate_hz_; }
    StreamInfo input_info() const;   // negotiated input stream (after start)
    StreamInfo output_info() const;  // negotiated output stream (after start)
    double stream_time_s() const;    // analysed input so far
    std::string input_name() const;  // "'Quad mic box' (JACK)", "the demo ensemble", "'take.wav'"

    // --- Test hooks -----------------------------------------------------------------
    // Drains the rings through the analysis. Thread: analysis (the engine's own
    // thread, or the caller after start(false)). Allocates: no. Locks: no.
    std::size_t analyze_available() noexcept;
    // The callbacks as a device calls them: mono, or interleaved frames of `channels`.
    void capture_block(std::span<const float> mono) noexcept { capture(mono.data(), mono.size(), 1); }
    void capture_block(std::span<const float> interleaved, int channels) noexcept {
        capture(interleaved.data(), interleaved.size() / static_cast<std::size_t>(channels), channels);
    }
    void playback_block(std::span<float> out, int channels) noexcept {
        playback(out.data(), out.size() / static_cast<std::size_t>(channels), channels);
    }

private:
    struct Impl;
    void capture(const float* in, std::size_t frames, int channels) noexcept override;
    void playback(float* out, std::size_t frames, int channels) noexcept override;
    void xrun(bool input_overflow, bool output_underflow) noexcept override;
    void say(const std::string& s) {
        if (message_) message_(s);
    }
    int channels_needed() const;
    void analyze_frames() noexcept;
    bool next_frame(pitch::PitchFrame& out) noexcept;
    void drop_drone(pitch::PitchFrame& f, std::size_t channel, bool removal_active) noexcept;
    void tell_channels();
    template <class R>
    void run_fast_impl(const std::function<void(const R&)>& on_reading, double max_s);

    EngineConfig cfg_;
    AudioSystem* system_;
    std::unique_ptr<Impl> impl_;
    EngineMode mode_ = EngineMode::performer;
    EnsembleSetup setup_;
    bool have_setup_ = false;
    pitch::TwoVoiceConfig two_config_;
    pitch::TargetSet two_targets_;
    DroneSettings drone_{};
    double rate_hz_ = 0.0;
    std::function<void(const std::string&)> message_;
};

}  // namespace beatless::audio
