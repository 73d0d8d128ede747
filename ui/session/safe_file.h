// Safe files — every file the program writes (a temporary beside the target, every write and the close checked,
// then POSIX rename(2); never a device, folder, FIFO or socket) and every text file it reads (type checked first,
// size capped). Details: DEVELOPERS.md, "Methods in detail".
// Thread: any; one SafeOutput per thread.
#pragma once

#include <cstddef>
#include <filesystem>
#include <string>
#include <string_view>

namespace beatless::ui {

// Throws Error with one line naming `target` when it cannot be an output:
// "/dev/full: is a device, not a file; give a file name" or
// "out/x.png: the folder out does not exist". A symbolic link is judged by
// what it points to. Returns the path to write (the link's target, if any).
std::filesystem::path check_output_path(const std::filesystem::path& target);

class SafeOutput {
public:
    // Checks the target and creates the temporary file beside it.
    explicit SafeOutput(const std::filesystem::path& target);
    ~SafeOutput();  // removes the temporary unless committed
    SafeOutput(const SafeOutput&) = delete;
    SafeOutput& operator=(const SafeOutput&) = delete;

    // The temporary file, for writers that open a path themselves (libsndfile).
    const std::string& temp_path() const { return temp_; }
    // Appends bytes to the temporary file; throws Error naming the target on failure.
    void write(std::string_view bytes);
    // Closes the temporary (checked) and renames it over the target.
    void commit();

private:
    std::string target_;  // as the user gave it, for messages
    std::string final_;   // the path replaced (a link's target)
    std::string temp_;
    int fd_ = -1;
    bool done_ = false;
};

// Writes `bytes` to `target` through a SafeOutput.
void write_file_safely(const std::filesystem::path& target, std::string_view bytes);

// Size caps of the text inputs (stated in DEVELOPERS.md, "Files").
inline constexpr std::size_t kTomlLimitBytes = 1u << 20;   // target sets, chords, drills, settings: 1 MB
inline constexpr std::size_t kCsvLimitBytes = 256u << 20;  // practice-log CSV import: 256 MB

// The whole text file at `path`, at most `limit_bytes`; `what` names the
// kind expected ("TOML file", "CSV file"). Throws Error with one line:
// "x.csv: too large (300.0 MB, limit 256 MB)", "/dev/zero: is a device, not a
// CSV file", "f: is a named pipe (FIFO), not a CSV file; ...".
std::string read_text_file(const std::string& path, std::size_t limit_bytes, std::string_view what);

}  // namespace beatless::ui
