// Log writer — saves drill attempts without ever stopping the drill: each attempt is stamped and queued, written in
// order, kept in memory while the log cannot be written (with a one-line warning), and offered as CSV on exit.
// Details: DEVELOPERS.md, "Methods in detail".
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
