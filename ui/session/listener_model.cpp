#include "ui/session/listener_model.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <cmath>

namespace beatless::ui {

using pitch::format_trimmed;

SimulatedListener::SimulatedListener(const ListenerConfig& c) : cfg_(c), alpha_(0.0), rng_(c.seed) {
    if (!(c.threshold_cents > 0.0 && c.threshold_cents <= 1200.0))
        throw Error("simulated listener: threshold " + format_trimmed(c.threshold_cents, 3) + " cents is out of range (above 0, at most 1200)");
    if (!(c.threshold_p > 0.5 && c.threshold_p < 1.0))
        throw Error("simulated listener: threshold_p " + format_trimmed(c.threshold_p, 4) + " must lie between 0.5 and 1");
    if (!(c.slope > 0.0 && c.slope <= 20.0)) throw Error("simulated listener: slope " + format_trimmed(c.slope, 3) + " is out of range (0 to 20)");
    alpha_ = c.threshold_cents / std::pow(-std::log(2.0 * (1.0 - c.threshold_p)), 1.0 / c.slope);
}

double SimulatedListener::p_correct(double d) const noexcept {
    if (!(d > 0.0)) return 0.5;
    return 1.0 - 0.5 * std::exp(-std::pow(d / alpha_, cfg_.slope));
}

bool SimulatedListener::answers_right(double d) noexcept { return rng_.uniform() < p_correct(d); }

}  // namespace beatless::ui
