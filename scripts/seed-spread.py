#!/usr/bin/env python3
"""Seed-to-seed spread of fitted hyperparameters (opt-in measurement script).

Usage: scripts/seed-spread.py BINARY SPEC [--seeds 1-10] [--draws N] [--set KEY=VALUE]

Fits SPEC once per seed with BINARY (`fit --seed S --out DIR`), then prints, per
free hyperparameter, the minimum, maximum, relative range (max − min)/|median|
and range on the optimiser's scale, plus the identifiability calls per seed and
the wall time. Used for the before/after tables in BENCHMARKS.md.
"""
import json, math, os, subprocess, sys, tempfile, time

def eta(x, lo, hi):
    logscale = lo > 0 and hi / lo >= 100
    t = (math.log(x) - math.log(lo)) / (math.log(hi) - math.log(lo)) if logscale else (x - lo) / (hi - lo)
    t = min(max(t, 1e-12), 1 - 1e-12)
    return math.log(t / (1 - t))

def main():
    args = sys.argv[1:]
    binary, spec = args[0], args[1]
    seeds, extra = range(1, 11), []
    i = 2
    while i < len(args):
        if args[i] == "--seeds":
            a, b = args[i + 1].split("-"); seeds = range(int(a), int(b) + 1); i += 2
        elif args[i] == "--draws":
            extra += ["--draws", args[i + 1]]; i += 2
        else:
            extra.append(args[i]); i += 1
    fits, walls = [], []
    with tempfile.TemporaryDirectory() as tmp:
        for s in seeds:
            out = os.path.join(tmp, f"s{s}")
            t0 = time.time()
            subprocess.run([binary, "fit", spec, "--seed", str(s), "--out", out, "--quiet"] + extra,
                           check=True, stdout=subprocess.DEVNULL)
            walls.append(time.time() - t0)
            with open(os.path.join(out, "fit.json")) as f:
                fits.append(json.load(f))
    free = fits[0]["free"]
    print(f"{spec}: {len(fits)} seeds, wall {min(walls):.2f}–{max(walls):.2f} s (median {sorted(walls)[len(walls)//2]:.2f})")
    print(f"{'hyperparameter':<22} {'min':>10} {'max':>10} {'rel.range':>10} {'eta range':>10}  calls")
    for name in free:
        v = [f["hyperparameters"][name] for f in fits]
        lo, hi = fits[0]["bounds"][name]
        med = sorted(v)[len(v) // 2]
        e = [eta(x, lo, hi) for x in v]
        calls = []
        for f in fits:
            ident = f["identifiability"]
            c = "D"
            if name in ident.get("undetermined", []): c = "U"
            if name in ident.get("borderline", []): c = "B"
            if name in ident.get("at_bound", []): c = "A"
            calls.append(c)
        print(f"{name:<22} {min(v):>10.4g} {max(v):>10.4g} {100*(max(v)-min(v))/abs(med):>9.2f}% {max(e)-min(e):>10.4f}  {''.join(calls)}")
    if "mc_error" in fits[0]:
        n = len(fits)
        print(f"{'hyperparameter':<22} {'observed sd':>12} {'reported sd':>12} {'ratio':>7}  set by")
        for name in free:
            v = [f["hyperparameters"][name] for f in fits]
            m = sum(v) / n
            sd = (sum((x - m) ** 2 for x in v) / (n - 1)) ** 0.5
            rep = [f["mc_error"][name] for f in fits]
            rep = [r for r in rep if r is not None]
            rsd = (sum(r * r for r in rep) / len(rep)) ** 0.5 if rep else float("nan")
            sb = sorted(set(f["set_by"][name] for f in fits))
            print(f"{name:<22} {sd:>12.4g} {rsd:>12.4g} {sd / rsd if rsd else float('nan'):>7.2f}  {','.join(sb)}")
    print("tie-break per seed:", " ".join(str(f.get("tie_break")) for f in fits))
    print("draws per seed:", " ".join(str(f.get("draws")) for f in fits))

main()
