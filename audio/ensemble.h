// EnsembleEngine — the live path for a group: one microphone per player.
//
//   capture callback ──▶ one SpscRing per player ──▶ analysis thread: per player
//   (device, demo, file)  (its channel, copied)        drone removal ─▶ YinTracker,
//                                                      then pitch/measure/ensemble_analyzer.h ─▶
//                                                      Latest / History / stream
//   playback callback ◀── Drone (audio/drone.h), when an output is opened
//
// The capture callback copies each player's channel into that player's ring
// (no allocation, no locks); the analysis drains the rings in lock-step, so
// every tracker's frames fall on the same instants, and EnsembleAnalyzer
// turns one frame per player into an EnsembleReading: deviations under the
// three references, beats between players, silent channels and channels
// carrying the same voice. Readings are published lock-free like the
// single-input engine (audio/engine.h). Inputs: a multi-channel device
// (refused with one line when it has too few channels), a multi-channel
// sound file (real-time pace, or run_fast()), or the demo ensemble
// (audio/demo_ensemble.h), whose microphones also hear the drone through
// a simulated room each. supervise() turns state changes into one-line
// messages ("channel 3 (Tenor) is silent ..."). The trackers use a 50 ms
// span for every input (the single-input engine uses 30 ms live): with the
// neighbours in every microphone, the shorter span lets crosstalk move a low
// voice by several cents, and a held chord needs no faster step response.
//
// Index: EnsembleEngineConfig, EnsembleSetup, EnsembleStatus, EnsembleEngine.
#pragma once

#include "audio/demo_ensemble.h"
#include "audio/device.h"
#include "audio/drone.h"
#include "audio/drone_removal.h"
#include "audio/live_io.h"
#include "audio/room.h"
#include "pitch/measure/ensemble_analyzer.h"

#include <functional>
#include <memory>
#include <span>
#include <string>

namespace beatless::audio {

struct EnsembleEngineConfig {
    double sample_rate_hz = 0.0;          // device rate to ask for (0 = negotiate; the demo uses 48 000)
    std::size_t block_len_frames = 256;   // frames per callback asked for (default 256)
    double hop_s = 0.005;                 // tracker hop (default 5 ms)
    double span_s = 0.050;                // tracker span (default 50 ms: a held chord, neighbours in every microphone)
    double f_min_hz = 55.0;               // lowest f0 tracked (default A1; two periods fit in span_s)
    double f_max_hz = 1600.0;             // highest f0 tracked (default 1600 Hz)
    double ring_s = 2.0;                  // each player's capture ring (default 2 s)
    bool drone_removal = true;            // remove the drone's partials per channel (default on)
    CancellerConfig canceller;            // drone removal settings (rate filled in)
    double stall_s = 1.0;                 // no callbacks for this long: the device is gone (default 1 s)
    double reopen_every_s = 1.0;          // retry period while the device is gone (default 1 s)
};

struct EnsembleSetup {
    pitch::Chord chord;                   // the chord being tuned
    std::vector<pitch::Player> players;   // names, voices, channels (1 to 8)
    pitch::EnsembleConfig analysis;       // root, A4, thresholds (hop_s is the engine's)
};

// LiveStatus (audio/live_io.h) holds the fields the single-input engine reports too.
struct EnsembleStatus : LiveStatus {
    int channels = 0;                         // channels delivered by the input
    int players = 0;
    std::uint64_t captured_frames = 0;        // into the rings
    std::uint64_t analyzed_frames = 0;
    std::uint64_t ring_overflow_frames = 0;   // dropped because the rings were full
};

class EnsembleEngine final : private StreamCallbacks {
public:
    // system may be null when only the demo or a file is used.
    EnsembleEngine(const EnsembleEngineConfig& config, AudioSystem* system);
    ~EnsembleEngine() override;
    EnsembleEngine(const EnsembleEngine&) = delete;
    EnsembleEngine& operator=(const EnsembleEngine&) = delete;

    // --- Setup (control thread) ------------------------------------------------
    // Before start: any setup. While running: a new chord, root, names or
    // voices for the same players on the same channels (else throws Error).
    void set_setup(EnsembleSetup setup);
    // The players' channels must exist on the device: one line naming the
    // device and the counts otherwise. Call after set_setup.
    void open_input_device(std::string_view spec);
    void open_output_device(std::string_view spec);        // the drone plays here
    void use_demo(DemoEnsembleConfig demo);                 // voices and channels from the setup when empty
    double use_file(const std::string& path);               // returns its rate; throws Error naming it
    void set_input_has_drone(bool on);                      // file: the recording holds a drone at the root
    void start(bool analysis_thread = true);                // false: the caller runs analyze_available()
    void stop();
    // File only: the whole file through rings and analysis in this thread, as fast as possible.
    void run_fast(const std::function<void(const pitch::EnsembleReading&)>& on_reading, double max_s = 0.0);

    // Demo only, after start(false): renders this many frames of the demo
    // ensemble and analyzes them in the calling thread (simulated time, as
    // `beatless snapshot` runs). Allocates: no.
    void run_demo_frames(std::size_t frames) noexcept;

    // --- Control (control thread) ---------------------------------------------
    void set_drone(const DroneSettings& s);   // throws Error on out-of-range values
    const DroneSettings& drone() const { return drone_; }
    void supervise();                          // device watchdog, channel messages; call every ~100 ms
    void on_message(std::function<void(const std::string&)> f) { message_ = std::move(f); }

    // --- Readings and status ----------------------------------------------------
    bool latest(pitch::EnsembleReading& out);                          // newest (one reader); false if none new
    std::size_t history(std::span<pitch::EnsembleReading> out) const;  // last readings, oldest first
    std::size_t take_readings(std::span<pitch::EnsembleReading> out);  // every reading in order (one reader)
    EnsembleStatus status() const;
    double sample_rate_hz() const { return rate_hz_; }
    StreamInfo input_info() const;
    double stream_time_s() const;
    const EnsembleSetup& setup() const { return setup_; }
    std::string input_name() const;            // "'Quad mic box' (JACK)", "the demo ensemble", "'take.wav'"

    // --- Test hooks -------------------------------------------------------------
    // Thread: analysis (its own thread, or the caller after start(false)). Allocates: no. Locks: no.
    std::size_t analyze_available() noexcept;
    // The capture callback as a device calls it: interleaved frames of `channels`.
    void capture_block(std::span<const float> interleaved, int channels) noexcept {
        capture(interleaved.data(), interleaved.size() / static_cast<std::size_t>(channels), channels);
    }

private:
    struct Impl;
    void capture(const float* in, std::size_t frames, int channels) noexcept override;
    void playback(float* out, std::size_t frames, int channels) noexcept override;
    void xrun(bool input_overflow, bool output_underflow) noexcept override;
    void say(const std::string& s) { if (message_) message_(s); }
    int channels_needed() const;

    EnsembleEngineConfig cfg_;
    AudioSystem* system_;
    std::unique_ptr<Impl> impl_;
    EnsembleSetup setup_;
    bool have_setup_ = false;
    DroneSettings drone_{};
    double rate_hz_ = 0.0;
    std::function<void(const std::string&)> message_;
};

}  // namespace beatless::audio
