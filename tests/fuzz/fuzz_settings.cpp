// libFuzzer target: a settings file never stops the program: any bytes give
// settings (defaults where a value is bad) and at most a warning naming the file.
#include "ui/session/settings.h"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    const auto got = beatless::ui::parse_settings(text, "fuzz.toml");
    if (!got.warning.empty() && got.warning.rfind("fuzz.toml", 0) != 0) std::abort();
    const auto& s = got.settings;
    if (!(s.a4_hz >= 400.0 && s.a4_hz <= 480.0)) std::abort();
    if (!(s.lowest_hz >= 30.0 && s.lowest_hz <= 200.0)) std::abort();
    if (!std::isfinite(s.level_dbfs)) std::abort();
    (void)beatless::ui::settings_toml(s);
    return 0;
}
