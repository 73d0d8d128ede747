// Take recorder — records the live input to a FLAC take off the audio thread: the engine's capture callback copies
// each analysed channel into a lock-free ring (capture()), a writer thread drains the rings in blocks into
// audio/take_writer.h and syncs the file to disk every second, so a killed program loses at most the last second.
// Free disk space is checked before starting (refused below min_free_start_bytes) and at every sync (stopped cleanly,
// keeping what was written, below min_free_run_bytes); a failed write stops it the same way.
// Thread: capture() on the audio callback (allocates no, locks no); everything else on one control thread.
#pragma once

#include "audio/drone.h"
#include "audio/ring.h"
#include "audio/take_writer.h"

#include <atomic>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <thread>
#include <vector>

namespace beatless::audio {

struct TakeRecorderConfig {
    double sample_rate_hz = 48000.0;                    // the input's rate, Hz
    int channels = 1;                                   // channels recorded, 1 .. 8
    double ring_s = 4.0;                                // each channel's ring, seconds (default 4)
    double sync_every_s = 1.0;                          // fsync period, seconds of audio (default 1)
    std::uint64_t min_free_start_bytes = 200ull << 20;  // refuse to start below this much free space (200 MB)
    std::uint64_t min_free_run_bytes = 50ull << 20;     // stop cleanly below this much (50 MB)
};

// A change of the drone, at the frame of the take it happened.
struct DroneChange {
    std::uint64_t frame = 0;
    DroneSettings settings;
};

// Bytes free to an unprivileged writer in the folder holding `path` (statvfs); UINT64_MAX when unknown.
std::uint64_t free_bytes_near(const std::string& path);

class TakeRecorder {
public:
    // Checks the free space and creates the FLAC file (`path`; messages name `shown_as`). Throws Error with one
    // line: "takes/x.flac: only 120 MB free on its disk (recording needs at least 200 MB)".
    TakeRecorder(const TakeRecorderConfig& config, const std::string& path, const std::string& shown_as);
    ~TakeRecorder();  // stop()
    TakeRecorder(const TakeRecorder&) = delete;
    TakeRecorder& operator=(const TakeRecorder&) = delete;

    // Copies one channel's block into its ring; the rings hold equal counts. Overflow is counted, never waited for.
    // Thread: audio callback. Allocates: no. Locks: no.
    void capture(std::size_t channel, std::span<const float> samples) noexcept;

    // Starts the writer thread.
    void start();
    // Drains the rings, finishes the file and joins the writer. Idempotent. Never throws: problem() says what failed.
    void stop() noexcept;
    // Records a drone change at the current frame (control thread): the first call, then changes of on, root,
    // timbre, fifth or octave (level alone is not a change here). Kept: the first kMaxDroneChanges.
    void note_drone(const DroneSettings& s);

    bool running() const { return running_.load(std::memory_order_acquire); }
    // The writer stopped by itself (disk nearly full, write failed); problem() says why.
    bool stopped_early() const { return stopped_early_.load(std::memory_order_acquire); }
    std::string problem() const;                         // after stopped_early() or stop(); "" when all went well
    bool finished_cleanly() const { return finished_; }  // after stop(): the file's header holds its length
    std::uint64_t captured_frames() const { return rings_[0]->written(); }
    std::int64_t written_frames() const { return written_.load(std::memory_order_acquire); }
    // Frames every ring can take now (a producer that may wait, such as a file run as fast as possible, waits for
    // this rather than have frames dropped). Thread: any.
    std::size_t space_frames() const noexcept;
    std::uint64_t overflow_frames() const { return rings_[0]->overflow_samples(); }
    double elapsed_s() const { return static_cast<double>(captured_frames()) / cfg_.sample_rate_hz; }
    const std::vector<DroneChange>& drone_changes() const { return changes_; }
    const TakeRecorderConfig& config() const { return cfg_; }

    static constexpr std::size_t kMaxDroneChanges = 4096;

private:
    void writer_loop() noexcept;
    std::size_t drain_once() noexcept;  // writes what is queued; 0 when nothing (or stopped)
    void fail(std::string why, bool write_failed) noexcept;

    TakeRecorderConfig cfg_;
    std::string path_, shown_;
    std::unique_ptr<TakeWriter> writer_;
    std::vector<std::unique_ptr<SpscRing<float>>> rings_;
    std::vector<float> chan_, frames_;  // writer scratch: [channel][block], interleaved
    std::vector<DroneChange> changes_;
    std::thread thread_;
    std::atomic<bool> running_{false}, stop_asked_{false}, stopped_early_{false};
    std::atomic<std::int64_t> written_{0};
    std::string problem_;  // written by the writer before stopped_early_ is set, or by stop()
    bool finished_ = false;
    bool stopped_ = false;
};

}  // namespace beatless::audio
