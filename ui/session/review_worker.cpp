#include "ui/session/review_worker.h"

#include "ui/session/safe_file.h"

#include <cmath>

namespace beatless::ui {

namespace {
struct Cancelled {};  // thrown through analyze's progress callback; not a std::exception, so review_take lets it by
}  // namespace

TakeSummary summary_of(const ReviewedTake& take) {
    TakeSummary s;
    double sum = 0.0;
    int n = 0;
    auto add = [&](const auto& items) {
        s.notes = static_cast<int>(items.size());
        for (const auto& item : items)
            if (std::isfinite(item.dev_cents)) sum += item.dev_cents, ++n;
    };
    if (take.voices == 2)
        add(take.duo.dyads);
    else
        add(take.analysis.notes);
    s.mean_dev_cents = n > 0 ? sum / n : NAN;
    return s;
}

ReviewWorker::ReviewWorker(std::filesystem::path cache_file) : cache_file_(std::move(cache_file)) {
    if (!cache_file_.empty()) known_.load(cache_file_);
    thread_ = std::thread([this] { run(); });
}

ReviewWorker::~ReviewWorker() {
    {
        std::lock_guard lk(mu_);
        stop_ = true;
        queue_.clear();
    }
    cv_.notify_all();
    thread_.join();
    if (dirty_ && !cache_file_.empty()) {
        try {
            known_.save(cache_file_);
        } catch (const std::exception&) {  // a read-only folder: the summaries are made again next time
        }
    }
}

void ReviewWorker::open(const std::string& path, const std::string& default_set, int voices) {
    {
        std::lock_guard lk(mu_);
        std::erase_if(queue_, [](const Job& j) { return j.open; });
        queue_.push_front(Job{path, default_set, true, voices});
        opened_.reset();
        if (in_hand_ && in_hand_->open) cancel_open_ = true;
    }
    cv_.notify_all();
}

std::optional<ReviewedTake> ReviewWorker::opened() {
    std::lock_guard lk(mu_);
    std::optional<ReviewedTake> out = std::move(opened_);
    opened_.reset();
    return out;
}

bool ReviewWorker::opening() const {
    std::lock_guard lk(mu_);
    return (in_hand_ && in_hand_->open) || (!queue_.empty() && queue_.front().open);
}

void ReviewWorker::summarise(const std::vector<std::string>& paths, const std::string& default_set) {
    {
        std::lock_guard lk(mu_);
        std::erase_if(queue_, [](const Job& j) { return !j.open; });
        for (const std::string& p : paths) {
            const auto it = listed_.find(p);
            if (it != listed_.end() && it->second.state != ListedSummary::State::reading) continue;
            listed_[p] = ListedSummary{};
            queue_.push_back(Job{p, default_set, false});
        }
    }
    cv_.notify_all();
}

ListedSummary ReviewWorker::summary(const std::string& path) const {
    std::lock_guard lk(mu_);
    const auto it = listed_.find(path);
    return it == listed_.end() ? ListedSummary{} : it->second;
}

void ReviewWorker::put(const ReviewedTake& take) {
    std::lock_guard lk(mu_);
    record(take.path, take);
}

// Called with mu_ held.
void ReviewWorker::record(const std::string& path, const ReviewedTake& r) {
    if (!r.error.empty()) {
        listed_[path] = ListedSummary{ListedSummary::State::unreadable, {}};
        return;
    }
    const TakeSummary s = summary_of(r);
    listed_[path] = ListedSummary{ListedSummary::State::known, s};
    if (const auto stamp = take_stamp(path, r.set_name)) {
        known_.put(path, *stamp, s);
        dirty_ = true;
    }
}

void ReviewWorker::forget(const std::string& path) {
    std::lock_guard lk(mu_);
    listed_.erase(path);
    known_.forget(path);
    dirty_ = true;
}

void ReviewWorker::wait_idle() {
    std::unique_lock lk(mu_);
    idle_cv_.wait(lk, [this] { return queue_.empty() && !in_hand_; });
}

// The set a take is judged against: its sidecar's, else the default (as review_take decides).
void ReviewWorker::summarise_one(const Job& job) {
    std::string set = job.set;
    try {
        const TakeDefaults d = take_defaults(job.path);
        if (!d.targets.empty()) set = d.targets;
    } catch (const std::exception&) {  // review_take reports it below
    }
    const auto stamp = take_stamp(job.path, set);
    if (stamp) {
        std::lock_guard lk(mu_);
        if (const auto s = known_.find(job.path, *stamp)) {
            listed_[job.path] = ListedSummary{ListedSummary::State::known, *s};
            return;
        }
    }
    const ReviewedTake r = review_take(job.path, job.set, [this](double, const char*) {
        if (stop_) throw Cancelled{};
    });
    std::lock_guard lk(mu_);
    record(job.path, r);
}

void ReviewWorker::run() {
    for (;;) {
        Job job;
        {
            std::unique_lock lk(mu_);
            if (queue_.empty() && dirty_ && !cache_file_.empty()) {
                // Written without the lock, so the screen's calls never wait for the disk.
                const std::string text = known_.text();
                dirty_ = false;
                lk.unlock();
                try {
                    write_file_safely(cache_file_, text);
                } catch (const std::exception&) {  // cannot be written: kept in memory only
                }
                lk.lock();
                if (!queue_.empty() || stop_) continue;
            }
            idle_cv_.notify_all();
            cv_.wait(lk, [this] { return stop_ || !queue_.empty(); });
            if (stop_) {
                in_hand_.reset();
                idle_cv_.notify_all();
                return;
            }
            job = std::move(queue_.front());
            queue_.pop_front();
            in_hand_ = job;
            cancel_open_ = false;
        }
        try {
            if (job.open) {
                ReviewedTake r = review_take(
                    job.path, job.set,
                    [this](double, const char*) {
                        if (stop_ || cancel_open_) throw Cancelled{};
                    },
                    job.voices);
                std::lock_guard lk(mu_);
                if (!cancel_open_) {
                    if (job.voices == 0) record(job.path, r);  // the list's summary is of the take as recorded
                    opened_ = std::move(r);
                }
            } else {
                summarise_one(job);
            }
        } catch (const Cancelled&) {}
        std::lock_guard lk(mu_);
        in_hand_.reset();
    }
}

}  // namespace beatless::ui
