// Log writer — saves drill attempts without ever stopping the drill.
//
// A drill hands each finished attempt to save(). The writer stamps it (uid,
// start time) at once, queues it in memory and writes the queue in order,
// one transaction per attempt (ui/session/practice_log.h). When the log cannot be
// written — a full or read-only disk, a folder that cannot be created, a
// damaged file — the attempt stays in memory, save() returns a one-line
// warning to show, and every later save() or retry() tries the whole queue
// again, reopening the file when it was never opened. Nothing is dropped in
// silence: an attempt the log refuses as bad data is set aside (also kept),
// and pending_csv() gives everything still unsaved as an importable CSV
// (ui/session/log_csv.h) for the program to offer on exit.
//
// Thread: one thread (the drill's, not the audio callback). Never throws.
#pragma once

#include "ui/session/practice_log.h"

#include <deque>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace beatless::ui {

struct SaveResult {
    std::size_t saved = 0;              // attempts written by this call (earlier ones kept in memory included)
    std::size_t pending = 0;            // attempts still in memory after this call
    std::string warning;                // one line when something is still unsaved, else empty
    std::optional<LogProblem> problem;  // why the log could not be written by this call, if it could not
};

class LogWriter {
public:
    explicit LogWriter(std::filesystem::path path, LogOptions options = {});

    SaveResult save(Attempt attempt);  // stamps, queues, writes what it can
    SaveResult retry();                // writes what it can of the queue
    std::size_t pending() const { return queue_.size() + refused_.size(); }
    std::vector<Attempt> pending_attempts() const;
    std::string pending_csv() const;           // header plus one row per unsaved attempt
    PracticeLog* log() { return log_.get(); }  // nullptr until opened
    const std::filesystem::path& path() const { return path_; }

private:
    std::filesystem::path path_;
    LogOptions options_;
    std::unique_ptr<PracticeLog> log_;
    std::deque<Attempt> queue_;
    std::vector<Attempt> refused_;
    std::string refused_reason_;
};

}  // namespace beatless::ui
