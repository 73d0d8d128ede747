// ProgressBar — see progress.h.
#include "ui/commands/progress.h"

#include <unistd.h>

#include <algorithm>
#include <cstdio>

namespace beatless::ui {

ProgressBar::ProgressBar(std::string label, bool enabled)
    : label_(std::move(label)), active_(enabled && isatty(2) == 1) {}

ProgressBar::~ProgressBar() { clear(); }

void ProgressBar::update(double fraction, const char* stage) {
    if (!active_) return;
    const auto now = std::chrono::steady_clock::now();
    if (shown_ && fraction < 1.0 && now - last_ < std::chrono::milliseconds(100)) return;
    last_ = now;
    constexpr int kCells = 30;
    const double f = std::clamp(fraction, 0.0, 1.0);
    const int full = static_cast<int>(f * kCells + 0.5);
    std::string line = "\r" + label_ + "  [" + std::string(static_cast<std::size_t>(full), '#') +
                       std::string(static_cast<std::size_t>(kCells - full), '.') + "]  ";
    char pct[16];
    std::snprintf(pct, sizeof pct, "%3d%%  ", static_cast<int>(f * 100.0));
    line += pct;
    line += stage ? stage : "";
    const std::size_t w = line.size() - 1;
    if (w < width_) line += std::string(width_ - w, ' ');
    width_ = std::max(width_, w);
    std::fputs(line.c_str(), stderr);
    std::fflush(stderr);
    shown_ = true;
}

void ProgressBar::clear() {
    if (!active_ || !shown_) return;
    std::fprintf(stderr, "\r%s\r", std::string(width_, ' ').c_str());
    std::fflush(stderr);
    shown_ = false;
}

}  // namespace beatless::ui
