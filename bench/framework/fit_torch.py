#!/usr/bin/env python3
"""The ratio-model fit of `triage bench fit --export DIR`, run in PyTorch side by side.

Reads each case NAME.f64 / NAME.json written by the export (standardised features, the per-event
coefficients A and B of the extended loss L = sum A (exp f - 1) - sum B f, the starting
parameters and triage's own L-BFGS trajectory), builds the same network (d-5-5-1, sigmoid,
float64, full batch) and minimises the same loss from the same starting point with

  * Adam (the optimiser of published studies of this method), parameters clamped to the clip box
    [-C, C] after every step, for a wall-time budget; and
  * bounded L-BFGS (SciPy's L-BFGS-B, box = clip), the loss and gradient from PyTorch, when SciPy
    is installed.

It first checks that PyTorch's loss at the common starting point equals triage's (the two programs
fit the same function), then prints, for t reaching 50%, 80%, 90%, 95%, 99% and 100% of triage's
final t, the seconds each took and their ratio, and when triage first reached the best t that
PyTorch reached within its budget, and writes NAME-torch.json beside the input.

Run with Debian's packages (python3-torch 1.13, python3-numpy, python3-scipy):
  /usr/bin/python3 bench/framework/fit_torch.py DIR [--cases 1D,2D,5D] [--seconds 300] [--threads 2]
"""
import argparse
import json
import sys
import time

import numpy as np
import torch

MILESTONES = (0.5, 0.8, 0.9, 0.95, 0.99, 1.0)


def load(folder, name):
    with open(f"{folder}/{name}.json") as fh:
        meta = json.load(fh)
    d = meta["features"]
    m = meta["referenceEvents"] + meta["observedEvents"]
    p = meta["parameters"]
    raw = np.fromfile(f"{folder}/{name}.f64", dtype="<f8")
    if raw.size != d * m + 2 * m + p:
        sys.exit(f"{folder}/{name}.f64: {raw.size} doubles, expected {d * m + 2 * m + p}")
    x = raw[: d * m].reshape(d, m).T.copy()
    a = raw[d * m: d * m + m].copy()
    b = raw[d * m + m: d * m + 2 * m].copy()
    theta0 = raw[d * m + 2 * m:].copy()
    return meta, x, a, b, theta0


class Net(torch.nn.Module):
    def __init__(self, d, widths, activation):
        super().__init__()
        sizes = [d] + list(widths) + [1]
        self.layers = torch.nn.ModuleList(
            torch.nn.Linear(sizes[i], sizes[i + 1]).double() for i in range(len(sizes) - 1))
        self.act = torch.sigmoid if activation == "SIGMOID" else torch.tanh

    def forward(self, x):
        for layer in self.layers[:-1]:
            x = self.act(layer(x))
        return self.layers[-1](x).squeeze(-1)


def set_flat(net, theta):
    """triage's layout: per layer the weights (outputs x inputs, row-major), then the biases."""
    off = 0
    with torch.no_grad():
        for layer in net.layers:
            for t in (layer.weight, layer.bias):
                n = t.numel()
                t.copy_(torch.from_numpy(theta[off: off + n]).view_as(t))
                off += n


def get_flat(net):
    return np.concatenate([t.detach().numpy().ravel() for layer in net.layers
                           for t in (layer.weight, layer.bias)])


def loss_of(net, x, a, b):
    f = net(x)
    return (a * (torch.exp(f) - 1.0)).sum() - (b * f).sum()


def first_time(seconds, ts, target):
    for s, t in zip(seconds, ts):
        if t >= target:
            return s
    return None


def run_adam(net, x, a, b, clip, lr, budget):
    opt = torch.optim.Adam(net.parameters(), lr=lr)
    seconds, ts = [], []
    start = time.perf_counter()
    epochs = 0
    while True:
        opt.zero_grad()
        loss = loss_of(net, x, a, b)
        loss.backward()
        opt.step()
        with torch.no_grad():
            for p in net.parameters():
                p.clamp_(-clip, clip)
        epochs += 1
        elapsed = time.perf_counter() - start
        seconds.append(elapsed)
        ts.append(-2.0 * loss.item())
        if elapsed > budget:
            break
    return seconds, ts, epochs


def run_lbfgsb(net, x, a, b, clip, budget):
    try:
        from scipy.optimize import minimize
    except ImportError:
        return None
    seconds, ts = [], []
    start = time.perf_counter()
    calls = [0]

    class Budget(Exception):
        pass

    def fun(theta):
        set_flat(net, theta)
        net.zero_grad()
        loss = loss_of(net, x, a, b)
        loss.backward()
        calls[0] += 1
        grad = np.concatenate([t.grad.numpy().ravel() for layer in net.layers
                               for t in (layer.weight, layer.bias)])
        elapsed = time.perf_counter() - start
        seconds.append(elapsed)
        ts.append(-2.0 * loss.item() if not ts else max(ts[-1], -2.0 * loss.item()))
        if elapsed > budget:
            raise Budget()
        return loss.item(), grad

    theta0 = get_flat(net)
    try:
        res = minimize(fun, theta0, jac=True, method="L-BFGS-B",
                       bounds=[(-clip, clip)] * theta0.size,
                       options={"maxiter": 100000, "maxfun": 1000000, "ftol": 1e-12, "gtol": 1e-8})
        status = res.message if isinstance(res.message, str) else res.message.decode()
    except Budget:
        status = "wall-time budget reached"
    return seconds, ts, calls[0], status


def compare(name, meta, seconds, ts, label, extra):
    ours_s, ours_t = meta["trajectorySeconds"], meta["trajectoryT"]
    t_final = meta["t"]
    rows = []
    print(f"  {label}: {extra}; best t = {max(ts):.4f} after {seconds[-1]:.1f} s")
    print(f"    {'target t':>10} {'triage s':>9} {'torch s':>9} {'ratio':>7}")
    for q in MILESTONES:
        target = q * t_final
        so = first_time(ours_s, ours_t, target)
        st = first_time(seconds, ts, target)
        ratio = st / so if st is not None and so else None
        rows.append({"fraction": q, "t": target, "triageSeconds": so, "torchSeconds": st, "ratio": ratio})
        print(f"    {target:10.3f} {so if so is not None else float('nan'):9.3f} "
              f"{st if st is not None else float('nan'):9.3f} "
              f"{'%7.1f' % ratio if ratio is not None else ('> %5.1f' % (seconds[-1] / so) if so else '    n/a')}")
    best = max(ts)
    at_best = seconds[ts.index(best)]
    so = first_time(ours_s, ours_t, best)
    reverse = {"torchBestT": best, "torchSeconds": at_best, "triageSeconds": so,
               "ratio": at_best / so if so else None}
    if so:
        print(f"    triage reached torch's best t = {best:.3f} after {so:.3f} s "
              f"(torch: {at_best:.1f} s): {at_best / so:.1f}x")
    return {"milestones": rows, "torchBest": reverse}


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("folder")
    ap.add_argument("--cases", default="1D,2D,5D")
    ap.add_argument("--seconds", type=float, default=300.0, help="wall-time budget per optimiser and case")
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--lr", type=float, default=1e-2, help="Adam step size")
    args = ap.parse_args()
    torch.set_num_threads(args.threads)
    print(f"torch {torch.__version__}, numpy {np.__version__}, threads {torch.get_num_threads()}, "
          f"budget {args.seconds:.0f} s per optimiser")
    for name in args.cases.split(","):
        meta, x_np, a_np, b_np, theta0 = load(args.folder, name)
        x, a, b = (torch.from_numpy(v) for v in (x_np, a_np, b_np))
        net = Net(meta["features"], meta["hiddenWidths"], meta["activation"])
        set_flat(net, theta0)
        with torch.no_grad():
            t0 = -2.0 * loss_of(net, x, a, b).item()
        t0_ours = meta["trajectoryT"][0]
        print(f"\n[{name}] {meta['referenceEvents']} + {meta['observedEvents']} events, {meta['parameters']} "
              f"parameters, clip {meta['clip']}; triage: t = {meta['t']:.4f} in {meta['seconds']:.2f} s "
              f"({meta['iterations']} iterations, converged={meta['converged']})")
        print(f"  same start: t0 torch {t0:.10f}, triage {t0_ours:.10f}")
        if abs(t0 - t0_ours) > 1e-8 * max(1.0, abs(t0_ours)):
            sys.exit(f"{name}: the two programs do not evaluate the same loss")
        # per-epoch cost, steady state
        for _ in range(5):
            net.zero_grad()
            loss_of(net, x, a, b).backward()
        reps = 20
        start = time.perf_counter()
        for _ in range(reps):
            net.zero_grad()
            loss_of(net, x, a, b).backward()
        per_eval = (time.perf_counter() - start) / reps
        print(f"  one loss-and-gradient evaluation: {per_eval * 1e3:.2f} ms")
        result = {"case": name, "torch": torch.__version__, "threads": args.threads, "budgetSeconds": args.seconds,
                  "evaluationSeconds": per_eval, "triageT": meta["t"], "triageSeconds": meta["seconds"]}
        set_flat(net, theta0)
        s, t, epochs = run_adam(net, x, a, b, meta["clip"], args.lr, args.seconds)
        result["adam"] = {"lr": args.lr, "epochs": epochs, "bestT": max(t), "seconds": s[-1],
                          "comparison": compare(name, meta, s, t, f"Adam lr={args.lr:g}", f"{epochs} epochs")}
        set_flat(net, theta0)
        lb = run_lbfgsb(net, x, a, b, meta["clip"], args.seconds)
        if lb is not None:
            s, t, calls, status = lb
            result["lbfgsb"] = {"evaluations": calls, "status": status, "bestT": max(t), "seconds": s[-1],
                                "comparison": compare(name, meta, s, t, "L-BFGS-B",
                                                      f"{calls} evaluations, {status}")}
        with open(f"{args.folder}/{name}-torch.json", "w") as fh:
            json.dump(result, fh, indent=2)


if __name__ == "__main__":
    main()
