// libFuzzer target: a target-set TOML file must load or throw beatless::Error
// with a message naming the file; never crash.
#include "pitch/base/error.h"
#include "ui/session/target_files.h"

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    try {
        const auto set = beatless::ui::parse_target_set(text, "fuzz.toml");
        if (set.targets.empty()) std::abort();
    } catch (const beatless::Error& e) {
        if (std::string(e.what()).rfind("fuzz.toml", 0) != 0) std::abort();
    }
    return 0;
}
