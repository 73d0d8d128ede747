// Take files — one recorded performance: a FLAC file (the microphone as it came in, 24-bit PCM, every input channel
// the session uses, the device's rate) and a TOML sidecar beside it with the session's context (root, A4, targets,
// drone and its changes, device, start time, duration). Takes live in <data folder>/takes/, named by local date and
// time ("2026-12-03_161502.flac" + ".toml", "-2", "-3" when taken). Format and fields: DEVELOPERS.md, "Takes".
// Thread: any (no shared state). Throws Error with one line naming the file.
#pragma once

#include "audio/drone.h"
#include "audio/timbre.h"
#include "ui/session/paths.h"

#include <cstdint>
#include <ctime>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

inline constexpr int kTakeFormat = 1;                     // the sidecar's `format`
inline constexpr std::size_t kTakeMaxDroneEvents = 4096;  // drone changes kept per take (later ones are dropped)
inline constexpr std::size_t kTakeMaxPlayers = 64;        // players a sidecar may list
inline constexpr int kTakeBusySeconds =
    5;  // recover_takes leaves a take written this recently (a recorder may be live)

enum class DroneEventKind { on, off, root };

// One change of the drone during the take.
struct DroneEvent {
    double t_s = 0.0;  // seconds from the take's first frame
    DroneEventKind what = DroneEventKind::on;
    double root_hz = 0.0;  // the root from then on
};

// The drone as it was at the take's start, and its changes.
struct TakeDrone {
    bool on = false;                              // sounding at the start
    audio::Timbre timbre = audio::Timbre::round;  // timbre
    double level_dbfs = -30.0;                    // RMS of the root tone, dBFS
    bool fifth = false;                           // 3/2 added
    bool octave = false;                          // 2/1 added
    std::vector<DroneEvent> events;               // changes, in time order
    // The phases of the drone's root and fifth at the take's first frame when it was already sounding then (its
    // fade in long done): regenerate_drone starts from them. Absent: unknown (no output, or an older take).
    std::optional<audio::DronePhases> phases;
};

// One player of an Ensemble take: which file channel is whose.
struct TakePlayer {
    int channel = 1;   // channel of the take file, from 1
    std::string name;  // "Tenor"
    int voice = 1;     // voice of the chord, 1 = lowest
};

struct TakeInfo {
    std::filesystem::path audio_path;    // the FLAC file
    std::filesystem::path sidecar_path;  // the TOML beside it
    int format = kTakeFormat;            // sidecar format version
    std::string started;                 // ISO 8601 local time with offset, "2026-12-03T16:15:02+01:00"
    double rate_hz = 0.0;                // sample rate of the take, Hz
    int channels = 1;                    // channels in the take file
    std::string device;                  // input device name (or "file NAME", "demo")
    std::string screen = "listen";       // "practice", "drills", "ensemble", "listen"
    double root_hz = 0.0;                // drone root at the start, Hz
    std::string root;                    // the root as a note name ("A2")
    double a4_hz = 440.0;                // A4 reference, Hz
    std::string targets;                 // target set name or file path
    std::string target;                  // fixed target ("7/5"); "" = nearest
    std::string drill;                   // drill name; "" = none
    int voices = 1;                      // 2: two voices in one input (a double stop, a duet), as --voices 2
    std::vector<TakePlayer> players;     // Ensemble: one per channel
    TakeDrone drone;                     // [drone]
    std::optional<double> duration_s;    // set when finalised
    bool complete = false;               // true once finalised (or recovered)
};

// The sidecar of a take file: the same name with ".toml".
std::filesystem::path take_sidecar_path(const std::filesystem::path& audio_path);
// <data folder>/takes (not created).
std::filesystem::path takes_dir(const EnvLookup& env = process_env());
// "2026-12-03_161502" for a local time.
std::string take_stem(std::time_t when);
// "2026-12-03T16:15:02+01:00" for a local time.
std::string iso8601_local(std::time_t when);
// dir/<stem>.flac whose FLAC and sidecar are both free (stem, stem-2, stem-3, ...).
std::filesystem::path free_take_path(const std::filesystem::path& dir, std::time_t when);

// The sidecar's text (TOML, strings escaped).
std::string take_sidecar_text(const TakeInfo& take);
// Writes take.sidecar_path through ui/session/safe_file.h. Throws Error naming the file.
void write_take_sidecar(const TakeInfo& take);
// Reads a sidecar (size-capped TOML). Throws Error "file:line: `key`: problem".
TakeInfo read_take_sidecar(const std::filesystem::path& sidecar);
TakeInfo parse_take_sidecar(std::string_view text, const std::string& source);

// The takes in `dir` (each sidecar that reads, with its FLAC), newest first; a sidecar that does not read is skipped
// and its one-line problem added to `problems` when given. A missing folder gives an empty list.
std::vector<TakeInfo> list_takes(const std::filesystem::path& dir, std::vector<std::string>* problems = nullptr);

// The take's drone rendered again, mono at the take's rate, len_frames long: audio::Drone (the live synthesis and
// limiter) set as the sidecar says at the start, each event applied at its frame, rendered in 256-frame blocks split
// at the events. The partials, level and changes are the live drone's; a drone already sounding when the take began
// starts from its phases then, at its level (no fade in), when the sidecar has them (else it fades in from phase 0).
// Throws Error on a sidecar out of range.
std::vector<float> regenerate_drone(const TakeInfo& take, std::int64_t len_frames);
// The same from frame from_frame on (the frames before it are rendered and dropped, so the phases are the same).
std::vector<float> regenerate_drone(const TakeInfo& take, std::int64_t from_frame, std::int64_t len_frames);

// What recover_takes did to one take.
struct RecoveredTake {
    std::filesystem::path audio_path;
    std::int64_t frames = 0;  // frames kept
    double duration_s = 0.0;  // their length
    std::string problem;      // "" when recovered; else why not (the take is left as it was)
};

// Finalises every take in `dir` whose sidecar says complete = false: reads what libsndfile can decode of its FLAC,
// rewrites it as a whole FLAC (through a temporary and rename), sets duration_s and complete = true. A take whose
// FLAC changed in the last kTakeBusySeconds is left alone (a recorder may still be writing it).
std::vector<RecoveredTake> recover_takes(const std::filesystem::path& dir);

}  // namespace beatless::ui
