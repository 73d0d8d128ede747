#include "ui/session/screen_id.h"

#include <array>
#include <cctype>

namespace beatless::ui {

namespace {

struct Names {
    ScreenId id;
    std::string_view key, title;
};
constexpr std::array<Names, 5> kNames{{
    {ScreenId::practice, "practice", "Practice"},
    {ScreenId::drills, "drills", "Drills"},
    {ScreenId::ensemble, "ensemble", "Ensemble"},
    {ScreenId::review, "review", "Review"},
    {ScreenId::settings, "settings", "Settings"},
}};

bool same_ignoring_case(std::string_view a, std::string_view b) {
    if (a.size() != b.size()) return false;
    for (std::size_t i = 0; i < a.size(); ++i)
        if (std::tolower(static_cast<unsigned char>(a[i])) != std::tolower(static_cast<unsigned char>(b[i])))
            return false;
    return true;
}

}  // namespace

std::string_view screen_key(ScreenId id) { return kNames[static_cast<std::size_t>(id)].key; }
std::string_view screen_title(ScreenId id) { return kNames[static_cast<std::size_t>(id)].title; }

std::optional<ScreenId> parse_screen_key(std::string_view s) {
    for (const Names& n : kNames)
        if (same_ignoring_case(s, n.key)) return n.id;
    return std::nullopt;
}

}  // namespace beatless::ui
