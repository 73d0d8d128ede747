// libFuzzer target: a drill TOML file must load or throw beatless::Error
// naming the file; a loaded drill's settings are a JSON object.
#include "pitch/base/error.h"
#include "ui/session/drill_files.h"

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    try {
        const auto d = beatless::ui::parse_drill(text, "fuzz.toml");
        const std::string json = beatless::ui::drill_settings_json(d);
        if (json.empty() || json.front() != '{' || json.back() != '}') std::abort();
    } catch (const beatless::Error& e) {
        if (std::string(e.what()).rfind("fuzz.toml", 0) != 0) std::abort();
    }
    return 0;
}
