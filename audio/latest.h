// Latest<T> and Recent<T, N> — lock-free publication of plain data (T trivially copyable), latest wins.
// Method: Latest is a triple buffer, Recent a circular array with a sequence number per slot (a seqlock); neither
// side ever waits for the other (how, beside each class).
// Thread: publish() from one writer, read() from one reader (Latest) or any number of readers (Recent).
// Allocates: no. Locks: no.
#pragma once

#include <algorithm>
#include <array>
#include <atomic>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <span>
#include <type_traits>

namespace beatless::audio {

// A triple buffer: the writer fills a back slot and swaps it with the middle slot in one atomic exchange (with a
// "fresh" bit); the reader swaps the middle slot into its front slot when it is fresh. Neither side ever waits
// for the other, and the reader always sees a whole value.
template <class T>
class Latest {
    static_assert(std::is_trivially_copyable_v<T>);

public:
    void publish(const T& v) noexcept {
        slots_[back_] = v;
        const unsigned prev = middle_.exchange(back_ | kFresh, std::memory_order_acq_rel);
        back_ = prev & kIndex;
        count_.fetch_add(1, std::memory_order_release);
    }
    // Copies the newest value into out; false when nothing new since the last call.
    bool read(T& out) noexcept {
        if (middle_.load(std::memory_order_acquire) & kFresh) {
            const unsigned prev = middle_.exchange(front_, std::memory_order_acq_rel);
            front_ = prev & kIndex;
            out = slots_[front_];
            return true;
        }
        out = slots_[front_];
        return false;
    }
    std::uint64_t count() const noexcept { return count_.load(std::memory_order_acquire); }  // values published

private:
    static constexpr unsigned kFresh = 4u, kIndex = 3u;
    std::array<T, 3> slots_{};
    unsigned back_ = 0;                // writer's slot
    std::atomic<unsigned> middle_{1};  // exchanged slot (+ fresh bit)
    unsigned front_ = 2;               // reader's slot
    std::atomic<std::uint64_t> count_{0};
};

// The last N values in a circular array guarded per slot by a sequence number (a seqlock: 2n+1 while value n is
// written, 2n+2 when done); readers copy and drop a slot that changed under them or holds another value than the
// one asked for; the writer never waits. T must be trivially copyable (Reading is: plain numbers, no pointers).
template <class T, std::size_t N>
class Recent {
    static_assert(std::is_trivially_copyable_v<T>);

public:
    void publish(const T& v) noexcept {
        const std::uint64_t n = count_.load(std::memory_order_relaxed);
        Slot& s = slots_[n % N];
        s.seq.store(2 * n + 1, std::memory_order_relaxed);  // odd: value n being written
        std::atomic_thread_fence(std::memory_order_release);
        copy_words(s.words, &v);
        s.seq.store(2 * n + 2, std::memory_order_release);  // value n complete
        count_.store(n + 1, std::memory_order_release);
    }

    // Copies the newest values, oldest first, into out (at most out.size(), at
    // most N - 1); returns how many. A slot overwritten during the copy (the
    // writer lapped the reader) fails its sequence check and is skipped.
    std::size_t read(std::span<T> out) const noexcept {
        const std::uint64_t n = count_.load(std::memory_order_acquire);
        const std::uint64_t want =
            std::min<std::uint64_t>({n, static_cast<std::uint64_t>(out.size()), static_cast<std::uint64_t>(N - 1)});
        std::size_t got = 0;
        for (std::uint64_t i = n - want; i < n; ++i) {
            const Slot& s = slots_[i % N];
            if (s.seq.load(std::memory_order_acquire) != 2 * i + 2) continue;  // not value i (any more)
            T tmp;
            copy_words(&tmp, s.words);
            std::atomic_thread_fence(std::memory_order_acquire);
            if (s.seq.load(std::memory_order_relaxed) != 2 * i + 2) continue;
            out[got++] = tmp;
        }
        return got;
    }
    std::uint64_t count() const noexcept { return count_.load(std::memory_order_acquire); }  // values ever published

private:
    // The payload is copied as relaxed atomic words, so a racing copy is not
    // a data race in the C++ memory model; the sequence check discards it.
    static constexpr std::size_t kWords = (sizeof(T) + 7) / 8;
    struct Slot {
        std::atomic<std::uint64_t> seq{0};
        std::atomic<std::uint64_t> words[kWords]{};
    };
    static void copy_words(std::atomic<std::uint64_t>* dst, const T* src) noexcept {
        std::uint64_t w[kWords] = {};
        std::memcpy(w, src, sizeof(T));
        for (std::size_t i = 0; i < kWords; ++i) dst[i].store(w[i], std::memory_order_relaxed);
    }
    static void copy_words(T* dst, const std::atomic<std::uint64_t>* src) noexcept {
        std::uint64_t w[kWords];
        for (std::size_t i = 0; i < kWords; ++i) w[i] = src[i].load(std::memory_order_relaxed);
        std::memcpy(static_cast<void*>(dst), w, sizeof(T));
    }
    std::array<Slot, N> slots_{};
    std::atomic<std::uint64_t> count_{0};
};

}  // namespace beatless::audio
