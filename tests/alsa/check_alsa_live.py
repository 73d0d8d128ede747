#!/usr/bin/python3
"""An ALSA device lost and returned, end to end through PortAudio's ALSA host.

This machine has no sound card, so the ALSA device is a PCM of alsa-lib's
`pulse` plugin (Debian's libasound2-plugins) defined in a private ~/.asoundrc
(HOME is the test's temporary runtime directory, never the user's own) and
reading the monitor of a null sink of a private `pulseaudio -n` through a
socket of its own: killing that server takes the device away from user space,
restarting it (and opening the socket) brings it back.
The server, the take and the listener come from check_pulse_live.py.
  1. `devices` lists the PCM as an ALSA device;
  2. a generated take (a drone on D3, a voice at 7/5 sung 6 c flat) is played
     into the sink while `listen --input <PCM> --seconds 8` reads it; the
     server is killed mid-run and restarted 2 s later: readings stop, resume
     within 3 s of its return, the run ends on time, the summary says how much
     audio was heard (and that matches the readings printed: one per 5-ms hop),
     and stderr says once that the device stopped and once that it is back;
  3. with the sink idle but for the take (no keeper clocking it), the plugin's
     first callback comes ~1 s after the stream starts: the device is not
     given up for lost before it has spoken (the watchdog waits longer for a
     stream's first callback than between callbacks).
Skips (exit 77) when pulseaudio, pulseaudio-utils or libasound2-plugins' pulse
plugin is missing. Every step has a timeout; every child is killed at the end.
Usage: check_alsa_live.py path/to/beatless
"""
import glob
import os
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "pulse"))
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "jack"))
import check_pulse_live as rig  # noqa: E402  (Server, write_take, Listener, lost_and_back, check, stop)
import jack_rig  # noqa: E402  (run: main under a guard that stops every child)

BEATLESS = sys.argv[1]
PCM = "alsa_room"  # our own PCM's name; ALSA's own "pulse" device is hidden while a server answers
HOP_S = 0.005  # listen prints one reading per tracker hop (EngineConfig::hop_s, default 5 ms)
ASOUNDRC = """# Written by check_alsa_live.py: an ALSA capture device whose backend is a private pulse server.
pcm.%s {
    type pulse
    server "unix:%s"
    device room.monitor
}
"""


def pulse_plugin_installed():
    return bool(glob.glob("/usr/lib/*/alsa-lib/libasound_module_pcm_pulse.so") +
                glob.glob("/usr/lib/alsa-lib/libasound_module_pcm_pulse.so"))


def main():
    for tool in ["pulseaudio", "pactl", "pacat", "paplay"]:
        if shutil.which(tool) is None:
            print("SKIP: %s is not installed (Debian: pulseaudio, pulseaudio-utils; CI installs them from .ci/debian-packages)" % tool)
            return 77
    if not pulse_plugin_installed():
        print("SKIP: alsa-lib's pulse PCM plugin is not installed (Debian: libasound2-plugins; CI installs it from .ci/debian-packages)")
        return 77
    runtime = tempfile.mkdtemp(prefix="beatless-alsa-")
    os.chmod(runtime, 0o700)
    home = os.path.join(runtime, "home")
    server = rig.Server(runtime, "pulseaudio")  # its env has HOME=runtime: alsa-lib reads our .asoundrc there
    # The PCM reaches the server through a socket of its own, opened once the server is
    # wholly up (its sinks loaded, the keeper clocking `room`), as a sound card comes back
    # whole: a stream joining earlier hears an unclocked null sink in 2-s chunks.
    socket = os.path.join(runtime, "alsa-native")
    with open(os.path.join(runtime, ".asoundrc"), "w") as f:
        f.write(ASOUNDRC % (PCM, socket))

    def open_socket():
        if not server.pactl("load-module", "module-native-protocol-unix", "socket=" + socket):
            raise RuntimeError("the PCM's socket %s could not be opened on the server" % socket)

    server.start()
    open_socket()
    env = server.env

    # 1. The PCM is an ALSA device of PortAudio's.
    r = subprocess.run([BEATLESS, "devices"], env=env, capture_output=True, text=True, timeout=30)
    rows = [l.split() for l in r.stdout.splitlines()]
    check = rig.check
    check(r.returncode == 0 and any(len(x) > 2 and x[1] == PCM and x[2] == "ALSA" for x in rows),
          "devices lists '%s' as an ALSA device" % PCM)

    # 2. The device's server killed and restarted mid-run (check_pulse_live.lost_and_back:
    # readings stop, resume within 3 s of the return, the run ends on time).
    take = os.path.join(runtime, "long.wav")
    rig.write_take(take, 30.0, voice_start_s=0.0)
    ls, _, back_at = rig.lost_and_back(server, ["--input", PCM, "--targets", "tritones", "--root", "D3", "--seconds", "8"],
                                       take, home, when_up=open_socket)
    err = ls.stderr_text()
    readings = ls.readings()
    check(("input '%s' (ALSA)" % PCM) in err, "the input is opened through PortAudio's ALSA host")
    after = [x for at, x in readings if x["f0_hz"] and at >= back_at]
    as_75 = [x for x in after if x["target"] == "7/5"]
    check(len(after) > 100 and len(as_75) >= 0.9 * len(after),
          "after the return the voice is read as 7/5 again: %d of %d readings" % (len(as_75), len(after)))
    lines = err.splitlines()
    check(sum("stopped delivering audio" in l and "trying to reopen" in l for l in lines) == 1, "one line says the device stopped")
    check(sum(("'%s' is back" % PCM) in l for l in lines) == 1, "one line says it is back")
    # PortAudio's ALSA host prints from its own callback thread when the device dies
    # ("Expression '...' failed in 'src/hostapi/alsa/pa_linux_alsa.c'", through PaUtil_DebugPrint,
    # whose redirect Debian's libportaudio2 does not export): those lines are let through, any other is not ours.
    noise = [l for l in lines if not l.startswith("beatless: ") and "src/hostapi/alsa/pa_linux_alsa.c" not in l]
    check(not noise, "no other library noise on stderr (%d lines%s)" % (len(noise), (": " + noise[0]) if noise else ""))
    # The summary: "N readings from S s of audio". S counts audio heard, at most the 8 s asked for;
    # N is one reading per 5-ms hop of it (within 5 %: the tracker's first span gives none).
    m = re.search(r"(\d+) readings from ([0-9.]+) s of audio", err)
    heard_s = float(m.group(2)) if m else float("nan")
    check(m is not None and 2.0 <= heard_s <= 8.0 + 0.1,
          "the summary says how much audio was heard: %.2f s (some, and at most the 8 s asked for)" % heard_s)
    if m:
        check(abs(int(m.group(1)) - heard_s / HOP_S) <= 0.05 * heard_s / HOP_S and len(readings) == int(m.group(1)),
              "%s readings printed and counted for %.2f s heard (%.0f hops of 5 ms)" % (len(readings), heard_s, heard_s / HOP_S))

    # 3. A late first callback: the keeper stopped, only paplay (its default latency) clocks the sink.
    rig.stop(server.procs[-1], signal.SIGKILL)  # Server.start() starts the keeper last
    player = subprocess.Popen(["paplay", "-d", "room", take], env=env, stderr=subprocess.DEVNULL, start_new_session=True)
    rig.children.append(player)
    time.sleep(0.3)
    ls = rig.Listener(["--input", PCM, "--targets", "tritones", "--root", "D3", "--seconds", "2"], env, home)
    code = ls.wait(20)
    rig.stop(player, signal.SIGKILL)
    err = ls.stderr_text()
    print("     | %s" % err.replace("\n", "\n     | "))
    first = ls.readings()[0][0] - ls.t0 if ls.readings() else float("inf")
    check(code == 0 and "stopped delivering" not in err and len(ls.readings()) > 100,
          "a late first callback is waited for: %d readings, the first %.2f s after the start, no loss reported" %
          (len(ls.readings()), first))
    server.kill()
    shutil.rmtree(runtime, ignore_errors=True)
    print("%d passed, %d failed" % (rig.checks[0] - len(rig.failures), len(rig.failures)))
    return 1 if rig.failures else 0


if __name__ == "__main__":
    jack_rig.run(main, rig.children)  # a hang or crash fails the test; every child is stopped
