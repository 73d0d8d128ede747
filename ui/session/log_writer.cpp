#include "ui/session/log_writer.h"

#include "ui/session/log_csv.h"

#include <exception>

namespace beatless::ui {

LogWriter::LogWriter(std::filesystem::path path, LogOptions options) : path_(std::move(path)), options_(options) {}

SaveResult LogWriter::save(Attempt attempt) {
    // Stamp now: a retry minutes later must not change when it happened.
    if (attempt.uid.empty()) attempt.uid = new_uid();
    if (attempt.started_at.empty()) attempt.started_at = utc_now_iso8601();
    queue_.push_back(std::move(attempt));
    return retry();
}

SaveResult LogWriter::retry() {
    SaveResult r;
    std::string problem;
    try {
        if (!log_ && !queue_.empty()) log_ = std::make_unique<PracticeLog>(path_, options_);
        while (!queue_.empty()) {
            bool refused = false;
            try {
                log_->add(queue_.front());
            } catch (const LogError& e) {
                if (e.problem() != LogProblem::bad_data) throw;
                refused_.push_back(std::move(queue_.front()));
                refused_reason_ = e.what();
                refused = true;
            }
            queue_.pop_front();
            if (!refused) ++r.saved;
        }
    } catch (const LogError& e) {
        problem = e.what();
        r.problem = e.problem();
        // A connection that failed for any reason but a full disk or a busy
        // lock is reopened on the next try (the folder may exist by then).
        if (e.problem() != LogProblem::full && e.problem() != LogProblem::busy) log_.reset();
    } catch (const std::exception& e) {
        problem = std::string("practice log ") + path_.string() + ": " + e.what();
        r.problem = LogProblem::other;
        log_.reset();
    }
    r.pending = pending();
    if (!problem.empty()) {
        r.warning = problem + "; " + std::to_string(r.pending) + (r.pending == 1 ? " attempt" : " attempts") +
                    " kept in memory, will retry on the next save";
    } else if (!refused_.empty()) {
        r.warning = refused_reason_ + "; " + std::to_string(refused_.size()) +
                    (refused_.size() == 1 ? " attempt" : " attempts") + " kept in memory";
    }
    return r;
}

std::vector<Attempt> LogWriter::pending_attempts() const {
    std::vector<Attempt> out(refused_.begin(), refused_.end());
    out.insert(out.end(), queue_.begin(), queue_.end());
    return out;
}

std::string LogWriter::pending_csv() const { return attempts_csv(pending_attempts(), true); }

}  // namespace beatless::ui
