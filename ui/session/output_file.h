// Output files — write a whole file safely: into a new temporary file beside
// the destination, flushed and synced, then renamed over it, so a failure
// leaves the old file (or none) and never half a file. A destination that is
// a folder, a device, a pipe or a socket is refused before anything is
// written. Errors are one line naming the file: "out.syx: is a folder, ...".
// (A small local helper until the shared safe-output helper lands; callers
// use only write_output_file.) Thread: any; blocking I/O.
#pragma once

#include <string>
#include <string_view>

namespace beatless::ui {

// Throws Error naming path and the problem.
void write_output_file(const std::string& path, std::string_view bytes);

}  // namespace beatless::ui
