// ProgressBar — one line of progress on stderr for long jobs.
//
// Drawn only when stderr is a terminal (isatty(2)), so pipes, logs and
// tests never see it: "take.wav  [##########..........]  50%  tracking
// notes", redrawn in place with a carriage return at most every 100 ms, and
// erased (spaces, then \r) by clear() or the destructor, so the next line
// on the terminal starts clean.
#pragma once

#include <chrono>
#include <string>

namespace beatless::ui {

class ProgressBar {
public:
    // enabled: the caller's wish (e.g. the file is long); the bar still
    // stays silent when stderr is not a terminal.
    ProgressBar(std::string label, bool enabled);
    ~ProgressBar();
    ProgressBar(const ProgressBar&) = delete;
    ProgressBar& operator=(const ProgressBar&) = delete;

    void update(double fraction, const char* stage);  // fraction 0..1
    void clear();                                     // erases the line (idempotent)
    bool active() const { return active_; }

private:
    std::string label_;
    bool active_ = false;
    bool shown_ = false;
    std::size_t width_ = 0;  // characters of the last line drawn
    std::chrono::steady_clock::time_point last_{};
};

}  // namespace beatless::ui
