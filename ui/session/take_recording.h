// Take recording — one take being recorded from the live engine: the recorder (audio/take_recorder.h) tapped into the
// engine's capture, the sidecar (ui/session/take_file.h) written at the start with complete = false and again at the
// end with the duration, the drone's state and changes, and complete = true.
// Thread: the control thread (the window's frame loop or the listen command's loop).
#pragma once

#include "audio/engine.h"
#include "audio/take_recorder.h"
#include "ui/session/take_file.h"

#include <filesystem>
#include <memory>
#include <string>

namespace beatless::ui {

// What the command or screen knows about the session; the recorder adds rate, channels, drone and timing.
struct TakeContext {
    std::string device;               // input name as shown ("the demo performer", "'USB mic' (JACK)")
    std::string screen = "listen";    // "practice", "drills", "ensemble", "listen"
    std::string root;                 // root as typed or as a note name
    double a4_hz = 440.0;             // A4 reference, Hz
    std::string targets;              // set name or file path
    std::string target;               // fixed target; "" = nearest
    std::string drill;                // drill name; "" = none
    int voices = 1;                   // 2: two voices in one input
    std::vector<TakePlayer> players;  // Ensemble: the players on the take's channels
};

class TakeRecording {
public:
    // Opens `audio_path` (a FLAC file; its folder must exist), writes the sidecar and taps the engine (which may or
    // may not be running: rate_hz and channels are the input's). Throws Error with one line (free space, the file).
    TakeRecording(audio::Engine& engine, const std::filesystem::path& audio_path, const TakeContext& context,
                  double rate_hz, int channels, const audio::TakeRecorderConfig& limits = {});
    ~TakeRecording();  // stop()
    TakeRecording(const TakeRecording&) = delete;
    TakeRecording& operator=(const TakeRecording&) = delete;

    // Detaches from the engine, finishes the FLAC and rewrites the sidecar. Returns the one line to show:
    // "recorded 12.3 s to 2026-12-03_161502.flac" or the problem that ended it. Idempotent.
    std::string stop();
    // True when the recorder stopped by itself (disk nearly full, a failed write): call stop() and show its line.
    bool stopped_early() const { return recorder_->stopped_early(); }
    double elapsed_s() const { return recorder_->elapsed_s(); }
    const TakeInfo& info() const { return info_; }
    void set_drill(const std::string& name) { info_.drill = name; }  // written into the sidecar at stop()
    std::string name() const { return info_.audio_path.filename().string(); }
    const audio::TakeRecorder& recorder() const { return *recorder_; }

private:
    audio::Engine* engine_;
    TakeInfo info_;
    std::unique_ptr<audio::TakeRecorder> recorder_;
    std::string result_;
    bool stopped_ = false;
};

// The drone's state at the take's start and its on/off/root changes, from the recorder's notes.
TakeDrone take_drone_from(const std::vector<audio::DroneChange>& changes, double rate_hz);

}  // namespace beatless::ui
