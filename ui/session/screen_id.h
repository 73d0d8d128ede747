// ScreenId — the screens of DESIGN.md by name: Practice, Drills, Ensemble,
// Review, Settings. Only the screens that are built are listed by
// ui/screens/screen.h; the names exist for settings files and `--screen`.
#pragma once

#include <optional>
#include <string_view>

namespace beatless::ui {

enum class ScreenId { practice, drills, ensemble, review, settings };

std::string_view screen_key(ScreenId id);                      // "practice" (settings files, --screen)
std::string_view screen_title(ScreenId id);                    // "Practice" (tabs)
std::optional<ScreenId> parse_screen_key(std::string_view s);  // case-insensitive; nullopt when unknown

}  // namespace beatless::ui
