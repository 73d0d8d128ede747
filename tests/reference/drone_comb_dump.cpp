// Helper for tests/reference/check_drone_comb.py: prints DroneComb's impulse response for a few rates, roots and
// feedbacks, for the script to compare with scipy.signal.freqz of the filter's own difference equation.
//   comb <rate> <root> <feedback> <len>   a filter, then
//   h <sample> ...                        its response to a unit impulse (after the start-up, all zeros before)
#include "pitch/dsp/drone_comb.h"

#include <cstdio>
#include <vector>

int main() {
    struct Case {
        double rate, root, g;
    };
    const Case cases[] = {{44100.0, 110.0, 0.5},
                          {48000.0, 65.406, 0.5},
                          {44100.0, 146.8324, 0.5},
                          {44100.0, 110.0, 0.95},
                          {44100.0, 110.0, 0.0}};
    for (const Case& c : cases) {
        beatless::pitch::DroneComb comb({.sample_rate_hz = c.rate, .root_hz = c.root, .feedback = c.g});
        // Past the start-up (a whole period and the interpolator's reach, in silence), then the impulse; long
        // enough for the feedback's tail to fall below float precision (g^periods).
        std::vector<float> lead(static_cast<std::size_t>(2.0 * comb.delay_samples()) + 8, 0.0f);
        comb.process(lead, lead);
        const std::size_t len = 1 << 17;
        std::vector<float> x(len, 0.0f), y(len);
        x[0] = 1.0f;
        comb.process(x, y);
        std::printf("comb %.6f %.6f %.6f %zu\nh", c.rate, c.root, c.g, len);
        for (const float v : y) std::printf(" %.9g", static_cast<double>(v));
        std::printf("\n");
    }
    return 0;
}
