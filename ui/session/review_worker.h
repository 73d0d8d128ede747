// ReviewWorker — the Review screen's analysis off the UI thread: one worker opens the take asked for (first in line)
// and then summarises each listed take not yet known (ui/session/take_summaries.h), saving the summaries so a restart
// does not redo them. The screen polls; it never waits (a test or snapshot may, with wait_idle).
// Method: a queue under a mutex and a condition variable; a job in hand is cancelled through analyze's progress
// callback (ui/session/take_analysis.h) when the worker stops or a newer open replaces it.
// Thread: the public functions from one UI thread; the worker thread inside. Allocates: yes.
#pragma once

#include "ui/session/take_analysis.h"
#include "ui/session/take_summaries.h"

#include <atomic>
#include <condition_variable>
#include <deque>
#include <filesystem>
#include <map>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <vector>

namespace beatless::ui {

// A summary as the list shows it: known, being read, or not readable.
struct ListedSummary {
    enum class State { reading, known, unreadable } state = State::reading;
    TakeSummary summary;
};

TakeSummary summary_of(const ReviewedTake& take);

class ReviewWorker {
public:
    // cache_file: where summaries are kept between runs ("" = nowhere).
    explicit ReviewWorker(std::filesystem::path cache_file);
    ~ReviewWorker();  // cancels the job in hand, joins, saves the summaries
    ReviewWorker(const ReviewWorker&) = delete;
    ReviewWorker& operator=(const ReviewWorker&) = delete;

    // Opens (analyses with its trace) the take at `path` before anything else; a newer open replaces an older one.
    // voices: 1 or 2, or 0 for what the sidecar says (review_take).
    void open(const std::string& path, const std::string& default_set, int voices = 0);
    // The opened take once it is ready (handed over once); nullopt while it is being read.
    std::optional<ReviewedTake> opened();
    bool opening() const;
    // The takes to summarise, in order; those already known (same file, same set) are not analysed again.
    void summarise(const std::vector<std::string>& paths, const std::string& default_set);
    ListedSummary summary(const std::string& path) const;
    void put(const ReviewedTake& take);  // a take the screen has (opened, renamed) gives its summary
    void forget(const std::string& path);
    // Tests and snapshots: blocks until the queue is empty and nothing is in hand.
    void wait_idle();

private:
    struct Job {
        std::string path;
        std::string set;
        bool open = false;
        int voices = 0;
    };
    void run();
    void summarise_one(const Job& job);
    void record(const std::string& path, const ReviewedTake& r);  // mu_ held

    std::filesystem::path cache_file_;
    mutable std::mutex mu_;
    std::condition_variable cv_, idle_cv_;
    std::deque<Job> queue_;
    std::optional<Job> in_hand_;
    std::optional<ReviewedTake> opened_;
    TakeSummaries known_;                          // by file and set (saved)
    std::map<std::string, ListedSummary> listed_;  // by path: what the list shows now
    bool dirty_ = false;                           // known_ has news to save
    std::atomic<bool> stop_{false};
    std::atomic<bool> cancel_open_{false};  // the open in hand was replaced
    std::thread thread_;
};

}  // namespace beatless::ui
