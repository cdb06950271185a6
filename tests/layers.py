#!/usr/bin/python3
"""layers.py [ROOT]: check the include graph between folders.

Every C file belongs to a folder with a floor; a file may include headers of
its own folder and of lower floors only (the allowed directions that
DEVELOPERS.md describes).  Plugins include only the public plugin header and
their own folder.  Prints one line per wrong-way include and exits 1 when
there is one.  tests/e2e_layers.sh runs it on the tree and on a tampered copy.
"""
import os
import re
import sys

# floor of each folder: higher floors may include lower ones, never the reverse
FLOORS = {
    'harness/base': 1,
    'harness/io': 2, 'perturb': 2, 'metrics': 2,
    'harness/plan': 3,
    'harness/results': 4, 'scenarios': 4,
    'harness/run': 5, 'reports': 5,
    'harness/cli': 6,
}
PUBLIC = 'harness/revisit_plugin.h'
INCLUDE = re.compile(r'^\s*#\s*include\s+"([^"]+)"', re.M)


def folder_of(path):
    d = os.path.dirname(path)
    if d.startswith('harness/plugins/'):
        return 'harness/plugins/' + d.split('/')[2]
    return d


def check(root):
    bad = []
    for top in ['harness', 'perturb', 'metrics', 'reports', 'scenarios']:
        for dirpath, _, names in os.walk(os.path.join(root, top)):
            for name in names:
                if not name.endswith(('.c', '.h')):
                    continue
                rel = os.path.relpath(os.path.join(dirpath, name), root)
                src = folder_of(rel)
                with open(os.path.join(root, rel), encoding='utf-8') as f:
                    text = f.read()
                for inc in INCLUDE.findall(text):
                    dst = folder_of(inc)
                    if inc == rel or dst == src:
                        continue
                    if src.startswith('harness/plugins/'):
                        if inc != PUBLIC:
                            bad.append(f'{rel}: includes {inc}: a plugin includes only {PUBLIC}')
                        continue
                    if inc == PUBLIC:
                        continue
                    if src not in FLOORS:
                        bad.append(f'{rel}: folder {src} has no floor in tests/layers.py')
                        break
                    if dst not in FLOORS:
                        bad.append(f'{rel}: includes {inc} from {dst}, a folder with no floor')
                    elif FLOORS[dst] >= FLOORS[src]:
                        bad.append(f'{rel}: includes {inc}: {src} (floor {FLOORS[src]}) may include '
                                   f'only lower floors, {dst} is floor {FLOORS[dst]}')
    return bad


if __name__ == '__main__':
    problems = check(sys.argv[1] if len(sys.argv) > 1 else '.')
    for p in problems:
        print(p)
    sys.exit(1 if problems else 0)
