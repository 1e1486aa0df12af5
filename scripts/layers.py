#!/usr/bin/env python3
# Prints which layer (top folder of src/) uses which, from the `crate::` paths outside tests
# and comments, and any import circle between modules. A development check: `python3 scripts/layers.py`.
# module dependency graph at the folder (layer) level and the file level; reports cycles
import re, glob, os, collections
files = glob.glob('src/**/*.rs', recursive=True)
def modname(f):
    p = f[4:-3].split('/')
    if p[-1] == 'mod': p = p[:-1]
    return '::'.join(p)
mods = {modname(f): f for f in files if f not in ('src/main.rs','src/lib.rs')}
edges = collections.defaultdict(set)
for m, f in mods.items():
    s = open(f).read()
    s = s.split('#[cfg(test)]')[0]
    s = '\n'.join(l for l in s.split('\n') if not l.lstrip().startswith('//'))
    for x in re.findall(r'crate::((?:[a-z_]+::)*[a-z_]+)', s):
        parts = x.split('::')
        # longest prefix that is a module
        for k in range(len(parts), 0, -1):
            c = '::'.join(parts[:k])
            if c in mods:
                if c != m and not m.startswith(c + '::') and not c.startswith(m + '::'):
                    edges[m].add(c)
                break
# layer graph
layer = lambda m: m.split('::')[0]
le = collections.defaultdict(set)
for a, bs in edges.items():
    for b in bs:
        if layer(a) != layer(b): le[layer(a)].add(layer(b))
for a in sorted(le): print(a, '->', sorted(le[a]))
# cycles at module level (Tarjan)
index = {}; low = {}; st = []; on = set(); sccs = []; i = [0]
def sc(v):
    index[v] = low[v] = i[0]; i[0] += 1; st.append(v); on.add(v)
    for w in edges.get(v, ()):
        if w not in index: sc(w); low[v] = min(low[v], low[w])
        elif w in on: low[v] = min(low[v], index[w])
    if low[v] == index[v]:
        comp = []
        while True:
            w = st.pop(); on.discard(w); comp.append(w)
            if w == v: break
        if len(comp) > 1: sccs.append(comp)
for v in list(mods):
    if v not in index: sc(v)
print('module cycles:', sccs)
