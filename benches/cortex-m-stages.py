#!/usr/bin/env python3
"""Where a step's instructions go, by inlined function: the per-stage breakdown.

Reads the per-address counts `cortex-m-count.sh --stages` writes (function, PC, instructions
per call) and the image's debug information (through `arm-none-eabi-addr2line -f -i`, Debian's
binutils-arm-none-eabi), and attributes each executed instruction to every function on its
inlined call chain. With fat LTO most of the core is inlined into the step, so a plain symbol
profile shows one big function; this shows the stages inside it. A function's figure is
inclusive (its callees inlined into it count too); out-of-line callees (runtime helpers such as
`__aeabi_lmul`, functions the compiler kept apart) are listed under their own names, once, at
depth 0.

Then, for the out-of-line callees, where they are called from: each executed call
instruction (`bl`) with its calls per step and the inlined function it sits in, so a runtime
helper's cost can be put down to a stage.

Usage: cortex-m-stages.py IMAGE PCS_TSV [DEPTH]   (DEPTH: inlining levels shown, default 6)
"""
import os
import collections
import re
import subprocess
import sys


def short(name):
    """A readable function name: hashes and generic arguments dropped."""
    name = re.sub(r"::h[0-9a-f]{16}$", "", name)
    while True:
        # The innermost <…> first, so nested generics go too; `<T as Trait>::f` becomes `::f`.
        shorter = re.sub(r"<[^<>]*>", "", name)
        if shorter == name:
            break
        name = shorter
    return name.lstrip(":").replace("clampwise_core::", "").replace("clampwise_benches::", "")


def chains(image, pcs):
    """addr2line -f -i: innermost frame first, then the functions it is inlined into."""
    args = ["arm-none-eabi-addr2line", "-f", "-i", "-C", "-a", "-e", image]
    text = subprocess.run(args, input="\n".join(pcs), capture_output=True, text=True, check=True).stdout
    result, cur, lines = {}, None, text.splitlines()
    i = 0
    while i < len(lines):
        line = lines[i]
        if line.startswith("0x"):
            cur = "%08x" % int(line, 16)
            result[cur] = []
            i += 1
            continue
        func, loc = line, lines[i + 1] if i + 1 < len(lines) else "??"
        result[cur].append((short(func), loc.split(" ")[0]))
        i += 2
    return result


def call_sites(image):
    """PC (8 hex digits) -> callee name, for every `bl` in the image."""
    llvm = os.environ.get("LLVM_BIN", "")
    objdump = os.path.join(llvm, "llvm-objdump") if llvm else "llvm-objdump"
    text = subprocess.run([objdump, "-d", "--no-show-raw-insn", image], capture_output=True,
                          text=True, check=True).stdout
    sites = {}
    for line in text.splitlines():
        m = re.match(r"\s*([0-9a-f]+):\s+bl\s+0x[0-9a-f]+\s+<([^>]+)>", line)
        if m:
            sites["%08x" % int(m.group(1), 16)] = m.group(2)
    return sites


def main():
    image, tsv = sys.argv[1], sys.argv[2]
    depth = int(sys.argv[3]) if len(sys.argv) > 3 else 6
    per_step = collections.defaultdict(dict)
    for row in open(tsv):
        step, pc, n = row.rstrip("\n").split("\t")
        per_step[step][pc.lower()] = float(n)
    for step, counts in sorted(per_step.items()):
        frames = chains(image, list(counts))
        total = sum(counts.values())
        tree = collections.defaultdict(float)
        for pc, n in counts.items():
            chain = list(reversed(frames.get(pc, [("??", "??")])))  # outermost first
            names = [f for f, _ in chain]
            for d in range(1, min(len(names), depth) + 1):
                tree[tuple(names[:d])] += n
        print(f"\n  {step}: {total:.0f} instructions per call, by inlined function (inclusive)")
        def show(prefix, level):
            kids = sorted(((k, v) for k, v in tree.items() if len(k) == level + 1 and k[:level] == prefix),
                          key=lambda kv: -kv[1])
            for k, v in kids:
                if v / total < 0.01 and level > 0:
                    continue
                print(f"  {v:9.1f}  {'  ' * level}{k[-1]}")
                if level + 1 < depth:
                    show(k, level + 1)
        show((), 0)
        sites = call_sites(image)
        calls = [(pc, n) for pc, n in counts.items() if pc in sites]
        if calls:
            print(f"\n  {step}: calls per step to out-of-line functions, by call site")
            for pc, n in sorted(calls, key=lambda kv: -kv[1]):
                chain = frames.get(pc, [("??", "??")])
                where = " in ".join(f for f, _ in chain[:2])
                print(f"  {n:9.2f}  {short(sites[pc])[:48]:48}  from {where[:110]}")


if __name__ == "__main__":
    main()
