#!/usr/bin/env python3
"""Layering check: reads every #include "..." line under src/ and fails
when a file includes a header of a later stage of the flow, or another
folder's private header. The stages, lowest first, are those of
docs/architecture.md; a stage may include its own headers and the public
headers (src/quantcap/*.h) of its own or any earlier stage.

Usage: check_layers.py SRC_DIR"""
import os
import re
import sys

# Stages in order: a folder may only use what is at its rank or below.
STAGES = ['core', 'models', 'frontend', 'quantizer', 'capacity', 'alphabet',
          'design', 'study', 'cli']
# The public header of each stage (src/quantcap/NAME.h -> folder).
PUBLIC = {
    'export': 'core', 'status': 'core', 'figures': 'core', 'atomic_file': 'core', 'dmc': 'core', 'info': 'core',
    'model': 'models', 'frontend': 'frontend', 'quantizer': 'quantizer',
    'capacity': 'capacity', 'memory': 'capacity', 'alphabet': 'alphabet', 'design': 'design',
    'plane': 'alphabet', 'iq': 'design',
    'study': 'study',
}
# Private headers shared beyond their folder, and why.
SHARED_PRIVATE = {
    # what every library file shares (qc_fail, checked allocation)
    'core/internal.h': set(STAGES) - {'cli'},
    # the one number grammar: compiled into the library and the CLI
    'core/parse.h': set(STAGES),
    # FFTW plans made under the library's one planner lock (FFTW's planner
    # is not thread-safe): the polar cells' Fourier series in design/
    'models/convolve.h': {'design'},
}

INCLUDE = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.M)


def rank(stage):
    return STAGES.index(stage)


def check(src):
    problems = []
    seen = 0
    for root, _, names in os.walk(src):
        for name in sorted(names):
            if not name.endswith(('.c', '.h')):
                continue
            path = os.path.join(root, name)
            rel = os.path.relpath(path, src)
            parts = rel.split(os.sep)
            if len(parts) == 1:          # the umbrella header
                continue
            folder = parts[0]
            if folder == 'quantcap':      # public headers: by their stage
                folder = PUBLIC.get(os.path.splitext(parts[1])[0])
                if folder is None:
                    problems.append(f'{rel}: a public header with no stage; add it to PUBLIC')
                    continue
            if folder not in STAGES:
                problems.append(f'{rel}: folder {parts[0]!r} is not a stage; add it to STAGES')
                continue
            text = open(path, encoding='utf-8').read()
            for m in INCLUDE.finditer(text):
                seen += 1
                inc = m.group(1)
                line = text.count('\n', 0, m.start()) + 1
                where = f'{rel}:{line}'
                if inc == 'quantcap.h':
                    if folder != 'cli':
                        problems.append(f'{where}: the umbrella quantcap.h is for users and the CLI; include the stage headers you need')
                    continue
                ip = inc.split('/')
                if len(ip) == 1:              # same-folder header ("cli.h")
                    continue
                if ip[0] == 'quantcap':
                    stage = PUBLIC.get(os.path.splitext(ip[1])[0])
                    if stage is None:
                        problems.append(f'{where}: unknown public header {inc}')
                    elif rank(stage) > rank(folder):
                        problems.append(f'{where}: {folder} includes {inc} of the later stage {stage}')
                    continue
                stage = ip[0]
                if stage not in STAGES:
                    problems.append(f'{where}: include of {inc} outside the stages')
                    continue
                if stage != folder and folder not in SHARED_PRIVATE.get(inc, set()):
                    problems.append(f'{where}: {folder} includes {inc}, a private header of {stage}/')
    return problems, seen


def main():
    src = sys.argv[1] if len(sys.argv) > 1 else 'src'
    problems, seen = check(src)
    for p in problems:
        print('layering:', p)
    print(f'layering: {seen} includes read, {len(problems)} problems')
    return 1 if problems else 0


if __name__ == '__main__':
    sys.exit(main())
