// Demo blocks (internal) — the render loop the demo performers share: the output cleared, then filled block by
// block, so a simulated player's pitch and level can change every kDemoBlockLen samples.
// Method: ours. Thread: the caller's (audio or producer thread). Allocates: no. Locks: no.
#pragma once

#include <algorithm>
#include <cstddef>
#include <span>

namespace beatless::audio {

inline constexpr std::size_t kDemoBlockLen = 32;  // pitch trajectory resolution (samples)

// Clears out, then calls block(offset, len) for each block of at most kDemoBlockLen samples, in order.
template <class Block>
void render_in_blocks(std::span<float> out, Block&& block) noexcept {
    std::fill(out.begin(), out.end(), 0.0f);
    for (std::size_t i = 0; i < out.size();) {
        const std::size_t len = std::min(kDemoBlockLen, out.size() - i);
        block(i, len);
        i += len;
    }
}

}  // namespace beatless::audio
