// Take recorder — see take_recorder.h.
#include "audio/take_recorder.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <sys/statvfs.h>
#include <algorithm>
#include <chrono>
#include <cstring>
#include <filesystem>

namespace beatless::audio {

namespace {

constexpr std::size_t kBlockFrames = 4096;  // the writer's block: one FLAC frame at libsndfile's default

std::string mb(std::uint64_t bytes) {
    return pitch::format_trimmed(static_cast<double>(bytes) / (1024.0 * 1024.0), 0) + " MB";
}

}  // namespace

std::uint64_t free_bytes_near(const std::string& path) {
    std::filesystem::path dir = std::filesystem::path(path).parent_path();
    if (dir.empty()) dir = ".";
    struct statvfs v {};
    if (::statvfs(dir.c_str(), &v) != 0) return UINT64_MAX;
    return static_cast<std::uint64_t>(v.f_bavail) * static_cast<std::uint64_t>(v.f_frsize);
}

TakeRecorder::TakeRecorder(const TakeRecorderConfig& config, const std::string& path, const std::string& shown_as)
    : cfg_(config), path_(path), shown_(shown_as.empty() ? path : shown_as) {
    if (cfg_.channels < 1 || cfg_.channels > 8)
        throw Error(shown_ + ": a take holds 1 to 8 channels, not " + std::to_string(cfg_.channels));
    if (const std::uint64_t free = free_bytes_near(path); free < cfg_.min_free_start_bytes)
        throw Error(shown_ + ": only " + mb(free) + " free on its disk (recording needs at least " +
                    mb(cfg_.min_free_start_bytes) + ")");
    writer_ = std::make_unique<TakeWriter>(path, cfg_.sample_rate_hz, cfg_.channels, shown_);
    const auto ring_len = static_cast<std::size_t>(cfg_.ring_s * cfg_.sample_rate_hz);
    for (int c = 0; c < cfg_.channels; ++c) rings_.push_back(std::make_unique<SpscRing<float>>(ring_len));
    chan_.assign(kBlockFrames * static_cast<std::size_t>(cfg_.channels), 0.0f);
    frames_.assign(kBlockFrames * static_cast<std::size_t>(cfg_.channels), 0.0f);
    changes_.reserve(kMaxDroneChanges);
    problem_.reserve(256);
}

TakeRecorder::~TakeRecorder() { stop(); }

void TakeRecorder::capture(std::size_t channel, std::span<const float> samples) noexcept {
    if (channel < rings_.size()) rings_[channel]->write(samples);
}

std::size_t TakeRecorder::space_frames() const noexcept {
    std::size_t n = rings_[0]->space();
    for (const auto& r : rings_) n = std::min(n, r->space());
    return n;
}

void TakeRecorder::start() {
    if (running_.load() || stopped_) return;
    running_.store(true, std::memory_order_release);
    thread_ = std::thread([this] { writer_loop(); });
}

void TakeRecorder::note_drone(const DroneSettings& s) {
    // Only what a take keeps (on, root, timbre, fifth, octave): a fade-in or a level slider moves the level every
    // frame and would fill the list.
    if (!changes_.empty()) {
        const DroneSettings& was = changes_.back().settings;
        if (was.on == s.on && was.root_hz == s.root_hz && was.timbre == s.timbre && was.fifth == s.fifth &&
            was.octave == s.octave)
            return;
    }
    if (changes_.size() < kMaxDroneChanges) changes_.push_back({captured_frames(), s});
}

std::string TakeRecorder::problem() const {
    if (!stopped_early_.load(std::memory_order_acquire) && !stopped_) return {};
    return problem_;
}

void TakeRecorder::fail(std::string why, bool write_failed) noexcept {
    if (problem_.empty()) problem_ = std::move(why);
    if (writer_) {
        // Keeps what reached the disk. After a failed write its header may not hold the length, so the take stays
        // unfinished until recover_takes() reads it through on a later start.
        try {
            writer_->close();
            finished_ = !write_failed;
        } catch (...) {
            finished_ = false;
        }
        writer_.reset();
    }
    stopped_early_.store(true, std::memory_order_release);
}

std::size_t TakeRecorder::drain_once() noexcept {
    if (!writer_) {
        for (auto& r : rings_) r->clear();  // stopped early: nothing more is kept
        return 0;
    }
    std::size_t n = kBlockFrames;
    for (const auto& r : rings_) n = std::min(n, r->available());
    if (n == 0) return 0;
    const auto ch = static_cast<std::size_t>(cfg_.channels);
    for (std::size_t c = 0; c < ch; ++c) rings_[c]->read(std::span<float>(chan_.data() + c * kBlockFrames, n));
    for (std::size_t i = 0; i < n; ++i)
        for (std::size_t c = 0; c < ch; ++c) frames_[i * ch + c] = chan_[c * kBlockFrames + i];
    try {
        writer_->write(std::span<const float>(frames_.data(), n * ch));
        written_.store(writer_->frames_written(), std::memory_order_release);
    } catch (const Error& e) {
        // EFBIG (a file-size limit) or ENOSPC: stop, keeping what the disk took.
        fail(std::string(e.what()) + "; recording stopped at " +
                 pitch::format_trimmed(static_cast<double>(written_.load()) / cfg_.sample_rate_hz, 1) +
                 " s, what was recorded is kept",
             true);
        return 0;
    }
    return n;
}

void TakeRecorder::writer_loop() noexcept {
    const auto sync_frames = static_cast<std::int64_t>(cfg_.sync_every_s * cfg_.sample_rate_hz);
    std::int64_t synced = 0;
    for (;;) {
        const bool last = stop_asked_.load(std::memory_order_acquire);
        while (drain_once() > 0) {}
        if (writer_ && written_.load() - synced >= sync_frames) {
            writer_->sync();
            synced = written_.load();
            if (const std::uint64_t free = free_bytes_near(path_); free < cfg_.min_free_run_bytes)
                fail(shown_ + ": only " + mb(free) + " left on its disk; recording stopped at " +
                         pitch::format_trimmed(static_cast<double>(synced) / cfg_.sample_rate_hz, 1) +
                         " s, what was recorded is kept",
                     false);
        }
        if (last) break;
        std::this_thread::sleep_for(std::chrono::milliseconds(20));
    }
}

void TakeRecorder::stop() noexcept {
    if (stopped_) return;
    stopped_ = true;
    if (thread_.joinable()) {
        stop_asked_.store(true, std::memory_order_release);
        thread_.join();
    } else {
        while (drain_once() > 0) {}
    }
    running_.store(false, std::memory_order_release);
    if (writer_) {
        try {
            writer_->close();
            finished_ = true;
        } catch (const Error& e) {
            if (problem_.empty()) problem_ = e.what();
        }
        writer_.reset();
    }
}

}  // namespace beatless::audio
