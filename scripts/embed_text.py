#!/usr/bin/env python3
"""Write a C header holding a text file as one string constant, so that
the library carries a data table without reading files at run time.

Usage: embed_text.py INPUT OUTPUT NAME"""
import sys


def main():
    src, dst, name = sys.argv[1:4]
    text = open(src, encoding='utf-8').read()
    lines = []
    for line in text.splitlines(keepends=True):
        esc = line.replace('\\', '\\\\').replace('"', '\\"').replace('\n', '\\n')
        lines.append(f'    "{esc}"')
    body = '\n'.join(lines) if lines else '    ""'
    with open(dst, 'w', encoding='utf-8') as f:
        f.write(f'/* generated from {src.split("/")[-1]} by scripts/embed_text.py */\n')
        f.write(f'static const char {name}[] =\n{body};\n')


if __name__ == '__main__':
    main()
