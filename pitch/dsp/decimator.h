// Decimator — integer-factor sample-rate reduction by a linear-phase FIR; StreamDecimator feeds it in blocks.
// Method: a Kaiser-windowed ideal low-pass (J. F. Kaiser, "Nonrecursive digital filter design using the I0-sinh window
// function", Proc. IEEE ISCAS 1974; beta and length as in A. V. Oppenheim and R. W. Schafer, Discrete-Time Signal
// Processing, 3rd ed., sec. 7.6.1); band edges and timing beside the class.
// Thread: one at a time. Allocates: in the constructors only (StreamDecimator: for blocks up to max_block_len).
#pragma once
#include <cstdint>

#include <cstddef>
#include <span>
#include <vector>

namespace beatless::pitch {

// Cutoff at half the output rate; passband to 0.4 of the output rate and stopband from 0.6 of it, so whatever
// aliases lands above the passband. Output m is centred on input sample m * factor (odd length, symmetric taps:
// no time shift), and is computed only for the outputs kept.
class Decimator {
public:
    // factor >= 1 (1 passes samples through); stop_db: stopband attenuation.
    explicit Decimator(std::size_t factor, double stop_db = 60.0);

    std::size_t factor() const noexcept { return factor_; }
    // Output m needs inputs m * factor - half_len() .. m * factor + half_len().
    std::size_t half_len() const noexcept { return half_len_; }
    std::span<const float> taps() const noexcept { return taps_; }

    // One output from the 2 * half_len() + 1 inputs starting at `first`
    // (input m * factor - half_len()). Allocates: no.
    float at(const float* first) const noexcept;

private:
    std::size_t factor_ = 1;
    std::size_t half_len_ = 0;
    std::vector<float> taps_;
};

// Streams a signal through a Decimator in blocks: output m is centred on input m * factor.
// Allocates: no, for blocks up to max_block_len.
class StreamDecimator {
public:
    // max_block_len: the longest block push() is given (memory is sized for it once).
    StreamDecimator(std::size_t factor, std::size_t max_block_len) : d_(factor), half_(d_.half_len()) {
        buf_.assign(half_, 0.0f);  // zeros before the first sample
        buf_.reserve(max_block_len + 2 * half_ + 1);
        out_.reserve(max_block_len / factor + 2);
    }
    std::span<const float> push(std::span<const float> in) {
        buf_.insert(buf_.end(), in.begin(), in.end());
        out_.clear();
        const auto f = static_cast<std::int64_t>(d_.factor()), h = static_cast<std::int64_t>(half_);
        const auto end = start_ + static_cast<std::int64_t>(buf_.size());
        for (; next_ * f + h < end; ++next_) out_.push_back(d_.at(buf_.data() + (next_ * f - h - start_)));
        const std::int64_t keep_from = next_ * f - h - start_;
        buf_.erase(buf_.begin(), buf_.begin() + keep_from);
        start_ += keep_from;
        return out_;
    }

private:
    Decimator d_;
    std::size_t half_;
    std::vector<float> buf_;
    std::vector<float> out_;
    std::int64_t start_ = -static_cast<std::int64_t>(half_);  // input index of buf_[0]
    std::int64_t next_ = 0;                                   // next output index
};

}  // namespace beatless::pitch
