#!/usr/bin/env python3
"""The room check itself: a tree whose lower room includes the upper one must fail, a clean tree must pass."""
import os
import subprocess
import sys
import tempfile

here = os.path.dirname(os.path.abspath(__file__))
with tempfile.TemporaryDirectory() as d:
    for folder in ('low', 'high'):
        os.makedirs(os.path.join(d, folder))
    open(os.path.join(d, 'rooms.txt'), 'w').write('low low : \nhigh high : low\n')
    open(os.path.join(d, 'high', 'h.h'), 'w').write('#include "low/l.h"\n')
    open(os.path.join(d, 'low', 'l.h'), 'w').write('#pragma once\n')
    run = lambda: subprocess.run([sys.executable, os.path.join(here, 'check_rooms.py'), os.path.join(d, 'rooms.txt'), d],
                                 capture_output=True, text=True)
    clean = run()
    open(os.path.join(d, 'low', 'l.cpp'), 'w').write('#include "high/h.h"\n')
    broken = run()
if clean.returncode != 0:
    sys.exit('clean tree refused: ' + clean.stdout)
if broken.returncode == 0 or 'low/l.cpp: includes high/h.h from room high' not in broken.stdout:
    sys.exit('upward include not caught: ' + broken.stdout)
print('room check: clean tree passes, upward include caught')
