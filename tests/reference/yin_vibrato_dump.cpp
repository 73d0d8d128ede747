// Helper for tests/reference/check_yin_vibrato.py: prints cases of the
// vibrato correction's model (window, lag, kernel second moment from
// pitch::yin_kernel_second_moment) for the script to check against a direct
// least-squares lag computed with numpy/scipy on an exactly known FM tone.
//   case <rate> <window> <lag> <K> <f0_hz> <depth> <vib_hz> <phase_rad> <t_s> <m2>
#include "pitch/dsp/yin.h"

#include <cstdio>

int main() {
    struct Case {
        double f0, depth, vib_hz, phase;
    };
    // depth: peak relative frequency deviation (0.0578 ~ 100 cents).
    const Case cases[] = {{220.0, 0.0578, 7.5, 0.0}, {220.0, 0.0289, 5.5, 1.0},       {440.0, 0.0578, 6.5, 2.0},
                          {131.0, 0.0173, 4.5, 0.3}, {330.0, 0.0578, 7.5, 1.5707963}, {660.0, 0.0400, 6.0, 4.0}};
    const double rate = 44100.0;
    const double usable = 2190.0;  // the 50 ms span less the refiner's margins
    for (const auto& c : cases) {
        const double period = rate / c.f0;
        int K = static_cast<int>(2.0 * usable / (3.0 * period) + 0.5);
        if (K < 1) K = 1;
        const double lag = K * period;
        const double window = usable - lag;
        std::printf("case %.17g %.17g %.17g %d %.17g %.17g %.17g %.17g %.17g %.17g\n", rate, window, lag, K, c.f0,
                    c.depth, c.vib_hz, c.phase, 0.5, beatless::pitch::yin_kernel_second_moment(window, lag));
    }
    return 0;
}
