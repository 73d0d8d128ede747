#!/usr/bin/env python3
"""Fails when a file includes a header from a room it may not use.

The rooms and their allowed arrows come from the build (rooms.txt, written
by beatless_room() in CMakeLists.txt): a room may include its own headers
and those of the rooms it USES, directly or through them. Usage:
check_rooms.py ROOMS_TXT SOURCE_DIR
"""
import os
import re
import sys


def main():
    rooms_txt, src = sys.argv[1], sys.argv[2]
    rooms = {}  # name -> (dir, [uses])
    for line in open(rooms_txt):
        if not line.strip():
            continue
        head, _, uses = line.partition(':')
        name, folder = head.split()
        rooms[name] = (folder, uses.split())
    if len(rooms) < 2:
        print(f"{rooms_txt}: fewer than two rooms listed")
        return 1

    def reach(name, seen=None):
        seen = set() if seen is None else seen
        if name in seen:
            return seen
        seen.add(name)
        for u in rooms[name][1]:
            if u not in rooms:
                raise SystemExit(f"{rooms_txt}: room {name} uses unknown room {u}")
            reach(u, seen)
        return seen

    by_dir = {folder: name for name, (folder, _) in rooms.items()}
    include = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.M)
    failures = []
    checked = 0
    for name, (folder, _) in rooms.items():
        allowed = reach(name)
        allowed_dirs = {rooms[r][0] for r in allowed}
        for f in sorted(os.listdir(os.path.join(src, folder))):
            if not f.endswith(('.h', '.cpp')):
                continue
            path = os.path.join(folder, f)
            for inc in include.findall(open(os.path.join(src, path), encoding='utf-8').read()):
                checked += 1
                inc_dir = os.path.dirname(inc)
                if inc_dir not in by_dir:
                    failures.append(f"{path}: includes {inc}, which is in no room")
                elif inc_dir not in allowed_dirs:
                    failures.append(f"{path}: includes {inc} from room {by_dir[inc_dir]}, "
                                    f"which {name} may not use (it uses: {' '.join(sorted(allowed - {name})) or 'none'})")
    for f in failures:
        print(f)
    print(f"{len(rooms)} rooms, {checked} includes checked, {len(failures)} against the arrows")
    return 1 if failures else 0


if __name__ == '__main__':
    sys.exit(main())
