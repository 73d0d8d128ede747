// SpscRing — a lock-free single-producer single-consumer ring of samples; what does not fit is dropped and counted.
// Method: the classic bounded ring, two monotonically increasing 64-bit counters and a power-of-two capacity (L.
// Lamport, "Specifying concurrent program modules", ACM TOPLAS 5(2), 1983), in C++ acquire/release form.
// Thread: write() from one producer (the audio callback), read() from one consumer (the analysis thread).
// Allocates: only in the constructor. Locks: no.
#pragma once

#include <algorithm>
#include <atomic>
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

namespace beatless::audio {

template <class T>
class SpscRing {
public:
    explicit SpscRing(std::size_t min_capacity) {
        std::size_t cap = 1;
        while (cap < min_capacity) cap <<= 1;
        buf_.assign(cap, T{});
        mask_ = cap - 1;
    }
    SpscRing(const SpscRing&) = delete;
    SpscRing& operator=(const SpscRing&) = delete;

    // Appends as much of `in` as fits; the rest is dropped and counted.
    // Returns the number written. Thread: producer. Allocates: no. Locks: no.
    std::size_t write(std::span<const T> in) noexcept {
        const std::uint64_t w = write_pos_.load(std::memory_order_relaxed);
        const std::uint64_t r = read_pos_.load(std::memory_order_acquire);
        const std::size_t space = buf_.size() - static_cast<std::size_t>(w - r);
        const std::size_t n = std::min(space, in.size());
        copy_in(w, in.first(n));
        write_pos_.store(w + n, std::memory_order_release);
        if (n < in.size()) {
            overflow_samples_.fetch_add(in.size() - n, std::memory_order_relaxed);
            overflow_events_.fetch_add(1, std::memory_order_relaxed);
        }
        offered_.store(offered_.load(std::memory_order_relaxed) + in.size(), std::memory_order_release);
        return n;
    }

    // Takes up to out.size() items. Thread: consumer. Allocates: no. Locks: no.
    std::size_t read(std::span<T> out) noexcept {
        const std::uint64_t r = read_pos_.load(std::memory_order_relaxed);
        const std::uint64_t w = write_pos_.load(std::memory_order_acquire);
        const std::size_t n = std::min(static_cast<std::size_t>(w - r), out.size());
        const std::size_t at = static_cast<std::size_t>(r & mask_);
        const std::size_t first = std::min(n, buf_.size() - at);
        std::copy_n(buf_.begin() + static_cast<std::ptrdiff_t>(at), first, out.begin());
        std::copy_n(buf_.begin(), n - first, out.begin() + static_cast<std::ptrdiff_t>(first));
        read_pos_.store(r + n, std::memory_order_release);
        return n;
    }

    // Drops everything queued. Thread: consumer.
    void clear() noexcept { read_pos_.store(write_pos_.load(std::memory_order_acquire), std::memory_order_release); }

    std::size_t capacity() const noexcept { return buf_.size(); }
    std::size_t available() const noexcept {  // items queued (any thread; a snapshot)
        return static_cast<std::size_t>(write_pos_.load(std::memory_order_acquire) -
                                        read_pos_.load(std::memory_order_acquire));
    }
    std::size_t space() const noexcept { return capacity() - available(); }
    std::uint64_t written() const noexcept { return write_pos_.load(std::memory_order_acquire); }  // items ever stored
    std::uint64_t offered() const noexcept { return offered_.load(std::memory_order_acquire); }    // stored + dropped
    std::uint64_t consumed() const noexcept { return read_pos_.load(std::memory_order_acquire); }
    std::uint64_t overflow_samples() const noexcept { return overflow_samples_.load(std::memory_order_relaxed); }
    std::uint64_t overflow_events() const noexcept { return overflow_events_.load(std::memory_order_relaxed); }

private:
    void copy_in(std::uint64_t w, std::span<const T> in) noexcept {
        const std::size_t at = static_cast<std::size_t>(w & mask_);
        const std::size_t first = std::min(in.size(), buf_.size() - at);
        std::copy_n(in.begin(), first, buf_.begin() + static_cast<std::ptrdiff_t>(at));
        std::copy_n(in.begin() + static_cast<std::ptrdiff_t>(first), in.size() - first, buf_.begin());
    }

    std::vector<T> buf_;
    std::size_t mask_ = 0;
    alignas(64) std::atomic<std::uint64_t> write_pos_{0};
    std::atomic<std::uint64_t> offered_{0};
    alignas(64) std::atomic<std::uint64_t> read_pos_{0};
    alignas(64) std::atomic<std::uint64_t> overflow_samples_{0};
    std::atomic<std::uint64_t> overflow_events_{0};
};

}  // namespace beatless::audio
