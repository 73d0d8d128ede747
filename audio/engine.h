// Engine — the live path: sources, ring, analysis thread, drone, readings.
//
//   capture callback ──▶ SpscRing ──▶ analysis thread: drone removal
//   (device, demo, file)               (audio/drone_removal.h) ─▶ YinTracker
//                                       ─▶ ReadingMaker ─▶ Latest / History / stream
//   playback callback ◀── Drone (audio/drone.h)
//
// The capture callback only copies channel 0 into the ring; the demo
// performer and a sound file are "devices" too: a producer thread calls the
// same capture path at real-time pace (or the caller drives a file as fast as
// possible with run_fast()). Readings are published lock-free (latest wins;
// a short history for the trace; a stream of every reading for `listen`,
// dropped and counted if nobody takes them); the analysis never waits.
// Control setters are for one control thread (the screen, or `listen`);
// supervise() from that thread watches the devices, reopens them and
// reports one-line messages.
//
// Index: EngineConfig, EngineStatus, Engine (setup, control, readings, test hooks).
#pragma once

#include "audio/demo_performer.h"
#include "audio/device.h"
#include "audio/drone.h"
#include "audio/drone_removal.h"
#include "audio/live_io.h"
#include "audio/ring.h"
#include "audio/room.h"
#include "audio/latest.h"
#include "pitch/measure/reading.h"
#include "pitch/measure/reading_maker.h"

#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <span>
#include <string>
#include <thread>

namespace beatless::audio {

// The live tracker's lowest f0 by default (voices, violin, viola: the lowest
// note of a bass voice, E2, is 82 Hz); lower needs a longer span.
inline constexpr double kLiveLowestHz = 70.0;

struct EngineConfig {
    double sample_rate_hz = 0.0;          // device rate to ask for (0 = negotiate; demo uses 48 000)
    std::size_t block_len_frames = 256;   // frames per callback asked for (default 256)
    double hop_s = 0.005;                 // tracker hop (default 5 ms)
    double span_s = 0.0;                  // most audio one tracker frame depends on (0 = 30 ms live, 50 ms for a file,
                                          // or longer when f_min_hz needs it: YinTracker::min_span_s)
    double f_min_hz = 0.0;                // lowest f0 tracked (0 = 70 Hz live, 55 Hz for a file)
    double f_max_hz = 1600.0;
    double ring_s = 2.0;                  // capture ring length (default 2 s)
    bool drone_removal = true;            // remove the drone's partials before tracking (default on)
    CancellerConfig canceller;            // drone removal settings (rate filled in by the engine)
    RoomConfig demo_room;                 // how the demo's microphone hears the drone
    double stall_s = 1.0;                 // no callbacks for this long: the device is gone (default 1 s)
    double reopen_every_s = 1.0;          // retry period while a device is gone (default 1 s)
};

// LiveStatus (audio/live_io.h) holds the fields the ensemble engine reports too.
struct EngineStatus : LiveStatus {
    std::uint64_t captured_samples = 0;     // into the ring
    std::uint64_t analyzed_samples = 0;     // out of the ring
    std::uint64_t ring_overflow_samples = 0;// dropped because the ring was full
    double tracker_delay_s = 0.0;           // part of the latency the tracker needs by design
    double device_input_latency_s = 0.0;    // host-reported, not included in the latency
    double device_output_latency_s = 0.0;
    bool output_ok = false;                 // output stream running (or none asked for)
};

class Engine final : private StreamCallbacks {
public:
    // system may be null when only the demo or a file is used.
    Engine(const EngineConfig& config, AudioSystem* system);
    ~Engine() override;
    Engine(const Engine&) = delete;
    Engine& operator=(const Engine&) = delete;

    // --- Setup (control thread, before start) -------------------------------
    // Choose devices (index or unique name part; "" = the default); they open
    // in start(), one duplex stream when both are the same device, and
    // input_info()/output_info() then report the negotiated rate and block.
    void open_input_device(std::string_view spec);
    void open_output_device(std::string_view spec);         // the drone plays here
    void use_demo(DemoConfig demo);                          // the built-in performer is the microphone
    double use_file(const std::string& path);                // returns the file's rate; throws Error naming it
    void set_input_has_drone(bool on);                       // file: the recording holds a drone at the root
    // Readings against this root and target set (also while running).
    void set_readings(const pitch::ReadingConfig& config, pitch::TargetSet targets);
    void start(bool analysis_thread = true);                 // false: the caller runs analyze_available()
    void stop();                                             // joins threads, closes streams
    // File only: drives the whole file through the ring and analysis in the
    // calling thread as fast as possible; on_reading sees every reading.
    void run_fast(const std::function<void(const pitch::Reading&)>& on_reading, double max_s = 0.0);

    // --- Control (control thread, any time) ---------------------------------
    void set_drone(const DroneSettings& s);   // throws Error on out-of-range values
    const DroneSettings& drone() const { return drone_; }
    void set_root_hz(double root_hz);          // drone and readings together
    void sound_reference();                    // the reference voice sounds the current target once
    // The reference voice sounds freq_hz for dur_s (drills: the announced
    // target, ear questions), 3 dB under the drone's level, with 50 ms fades;
    // a tone asked for while one sounds glides to the new pitch over 50 ms.
    // Throws Error on a frequency outside 20 Hz .. 5 kHz or a length outside 0.1 .. 30 s.
    void sound_tone(double freq_hz, double dur_s);
    void supervise();                          // watchdog and reopening; call every ~100 ms
    void on_message(std::function<void(const std::string&)> f) { message_ = std::move(f); }

    // --- Readings and status -------------------------------------------------
    bool latest(pitch::Reading& out);                          // newest reading (one reader); false if none new
    std::size_t history(std::span<pitch::Reading> out) const;  // last readings, oldest first (any thread)
    std::size_t take_readings(std::span<pitch::Reading> out);  // every reading in order (one reader)
    EngineStatus status() const;
    double sample_rate_hz() const { return rate_hz_; }
    StreamInfo input_info() const;                             // negotiated input stream (after start)
    StreamInfo output_info() const;                            // negotiated output stream (after start)
    double stream_time_s() const;                              // analyzed input so far

    // --- Test hooks -----------------------------------------------------------
    // Drains the ring through the analysis. Thread: analysis (the engine's own
    // thread, or the caller after start(false)). Allocates: no. Locks: no.
    std::size_t analyze_available() noexcept;
    // The capture and playback callbacks, as a device calls them.
    void capture_block(std::span<const float> mono) noexcept { capture(mono.data(), mono.size(), 1); }
    void playback_block(std::span<float> out, int channels) noexcept { playback(out.data(), out.size() / channels, channels); }

private:
    struct Impl;
    void capture(const float* in, std::size_t frames, int channels) noexcept override;
    void playback(float* out, std::size_t frames, int channels) noexcept override;
    void xrun(bool input_overflow, bool output_underflow) noexcept override;
    void say(const std::string& s) { if (message_) message_(s); }

    EngineConfig cfg_;
    AudioSystem* system_;
    std::unique_ptr<Impl> impl_;
    DroneSettings drone_{};
    double rate_hz_ = 0.0;
    std::function<void(const std::string&)> message_;
};

}  // namespace beatless::audio
