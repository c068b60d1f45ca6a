#!/usr/bin/python3
"""Fits a small neural SDF with a color head to a Kilnmarket demo recipe and exports it for Fieldkiln.

    npm run build
    /usr/bin/python3 assets/demo/neural/fit_field.py            # the round stool, the committed settings

The training targets come from Fieldkiln's own recipe evaluator (``sample_recipe.mjs``, run by this script
through Node), so the network learns exactly the field that ``fieldkiln bake <recipe>`` meshes. The network is
trained in a unit frame (the recipe's bounds centered and divided by their largest half-extent) and exported
through :class:`export_example.FieldkilnWrapper`, which bakes that normalisation into the graph: the ONNX input is
``points`` in world metres, +Y up, and the outputs are ``sdf`` [N,1] (metres) and ``color`` [N,3] (linear RGB).

Deterministic: fixed seeds, one torch thread, one BLAS thread, deterministic algorithms. Bit-identical output
needs the same torch and BLAS build (``fit_report.json`` records both). With Debian's OpenBLAS (``libopenblas0``,
which python3-torch recommends) it takes about 4-5 minutes on one core; with the reference BLAS about 2.5x longer.
Writes ``<prop>_sdf.onnx`` and ``fit_report.json`` next to this file (or where --out/--report say).

Network: 3 -> Fourier features -> 64 -> 64 -> 64, heads sdf (1) and color (3, sigmoid), Softplus activations.
The Fourier features (sin/cos of the point times a fixed set of frequencies, as in Tancik et al., "Fourier
Features Let Networks Learn High Frequency Functions in Low Dimensional Domains", NeurIPS 2020) let a
64-wide network hold the stool's 28 mm foot ring; they export as MatMul/Sin/Cos.
"""
import argparse
import json
import math
import os

os.environ.setdefault('OPENBLAS_NUM_THREADS', '1')  # before torch loads its BLAS: one thread, reproducible sums
import subprocess
import sys
import tempfile
import time

import numpy as np
import onnx
import torch
from torch import nn

HERE = os.path.dirname(os.path.abspath(__file__))
REPO_ROOT = os.path.abspath(os.path.join(HERE, '..', '..', '..'))
sys.path.insert(0, HERE)
sys.dont_write_bytecode = True  # no __pycache__ beside the committed files
from export_example import FieldkilnWrapper, export_field  # noqa: E402


class FieldNet(nn.Module):
    """Points in the unit frame [N,3] -> (sdf in unit-frame lengths [N,1], color logits [N,3])."""

    def __init__(self, width=64, layers=3, freqs=(1, 2, 4, 8)):
        super().__init__()
        # Fixed (not trained) frequency matrix: each axis at each frequency, times pi.
        b = torch.cat([torch.eye(3) * f for f in freqs], dim=0) * math.pi  # [3F,3]
        self.register_buffer('freq_t', b.t().contiguous())
        n_in = 3 + 2 * b.shape[0]
        mods, d = [], n_in
        for _ in range(layers):
            mods += [nn.Linear(d, width), nn.Softplus(beta=20)]
            d = width
        self.trunk = nn.Sequential(*mods)
        self.sdf_head = nn.Linear(width, 1)
        self.color_head = nn.Linear(width, 3)

    def forward(self, q):
        z = q @ self.freq_t
        h = self.trunk(torch.cat([q, torch.sin(z), torch.cos(z)], dim=1))
        return self.sdf_head(h), self.color_head(h)


def load_set(dir_, name):
    p = np.fromfile(os.path.join(dir_, f'{name}_points.f32'), dtype='<f4').reshape(-1, 3)
    d = np.fromfile(os.path.join(dir_, f'{name}_sdf.f32'), dtype='<f4')
    c = np.fromfile(os.path.join(dir_, f'{name}_color.f32'), dtype='<f4').reshape(-1, 3)
    return torch.from_numpy(p.copy()), torch.from_numpy(d.copy()).reshape(-1, 1), torch.from_numpy(c.copy())


def loaded_blas():
    """The BLAS library this process loaded (Debian switches it through update-alternatives)."""
    try:
        with open('/proc/self/maps') as f:
            libs = {line.split()[-1] for line in f if 'blas' in line.split()[-1]}
        return sorted(os.path.realpath(x) for x in libs)
    except OSError:
        return []


def stats_mm(err_m):
    e = err_m.abs().flatten().double() * 1000
    return {'mean': round(e.mean().item(), 4), 'p99': round(torch.quantile(e, 0.99).item(), 4), 'max': round(e.max().item(), 4)}


def main():
    ap = argparse.ArgumentParser(description=__doc__.split('\n')[0])
    ap.add_argument('--recipe', default=os.path.join(REPO_ROOT, 'assets', 'demo', 'round-stool.recipe.json'))
    ap.add_argument('--out', default=os.path.join(HERE, 'round_stool_sdf.onnx'))
    ap.add_argument('--report', default=os.path.join(HERE, 'fit_report.json'))
    ap.add_argument('--samples', help='a folder already written by sample_recipe.mjs (default: sample into a temp folder)')
    ap.add_argument('--seed', type=int, default=8)
    ap.add_argument('--steps', type=int, default=3000)
    ap.add_argument('--batch', type=int, default=2048, help='points per set (uniform, near, surface) per step')
    args = ap.parse_args()

    torch.set_num_threads(1)
    torch.manual_seed(args.seed)
    torch.use_deterministic_algorithms(True)
    t0 = time.time()

    tmp = None
    samples = args.samples
    if samples is None:
        tmp = tempfile.TemporaryDirectory(prefix='fieldkiln-samples-')
        samples = tmp.name
        subprocess.run(['node', os.path.join(HERE, 'sample_recipe.mjs'), args.recipe, '--out', samples, '--seed', str(args.seed)],
                       check=True, cwd=REPO_ROOT, stdout=subprocess.DEVNULL)
    with open(os.path.join(samples, 'samples.json')) as f:
        info = json.load(f)
    sets = {name: load_set(samples, name) for name in ('uniform', 'surface', 'near', 'test')}

    bounds = info['bounds']
    lo, hi = torch.tensor(bounds[:3]), torch.tensor(bounds[3:])
    center = (lo + hi) / 2
    half = float(((hi - lo) / 2).max())  # uniform scale: a distance stays a distance

    def to_unit(p):
        return (p - center) / half

    net = FieldNet()
    opt = torch.optim.Adam(net.parameters(), lr=2e-3)
    sched = torch.optim.lr_scheduler.LambdaLR(opt, lambda s: 0.01 + 0.99 * 0.5 * (1 + math.cos(math.pi * s / args.steps)))
    gen = torch.Generator().manual_seed(args.seed)

    def batch(name):
        p, d, c = sets[name]
        idx = torch.randint(0, p.shape[0], (args.batch,), generator=gen)
        return to_unit(p[idx]), d[idx] / half, c[idx]

    for step in range(args.steps):
        qu, du, _ = batch('uniform')
        qn, dn, cn = batch('near')
        qs, ds, cs = batch('surface')
        q = torch.cat([qu, qn, qs])
        sdf, col = net(q)
        n = args.batch
        # L1 on the distance everywhere, weighted up near and on the surface; color near the surface only.
        loss_sdf = (sdf[:n] - du).abs().mean() + 2 * (sdf[n:2 * n] - dn).abs().mean() + 10 * (sdf[2 * n:] - ds).abs().mean()
        rgb = torch.sigmoid(col[n:])
        tgt = torch.cat([cn, cs])
        near_mask = torch.cat([dn.abs() * half < 0.01, torch.ones_like(ds, dtype=torch.bool)]).float()
        loss_col = ((rgb - tgt).abs().mean(dim=1, keepdim=True) * near_mask).sum() / near_mask.sum()
        loss = loss_sdf + 0.02 * loss_col
        opt.zero_grad()
        loss.backward()
        opt.step()
        sched.step()
        if step % 500 == 0 or step == args.steps - 1:
            print(f'step {step:5d}  sdf {loss_sdf.item():.5f}  color {loss_col.item():.4f}', flush=True)

    wrapper = FieldkilnWrapper(net, 'sdf', world_to_net_offset=tuple(center.tolist()), world_to_net_scale=1 / half,
                               color_mode='logit').eval()
    with torch.no_grad():
        def evaluate(p):
            return [torch.cat(x) for x in zip(*[wrapper(c) for c in torch.split(p, 65536)])]
        tp, td, tc = sets['test']
        sdf_t, col_t = evaluate(tp)
        up, ud, _ = sets['uniform']
        sdf_u, _ = evaluate(up)
        np_, nd, _ = sets['near']
        sdf_n, _ = evaluate(np_)
        band = nd.abs() < 0.01
        probes_p = torch.cat([tp[:6], up[:6]])
        probe_sdf, probe_col = wrapper(probes_p)

    export_field(wrapper, args.out, bounds=bounds, level=0, opset=17)
    size = os.path.getsize(args.out)
    report = {
        'model': os.path.basename(args.out),
        'recipe': os.path.relpath(os.path.abspath(args.recipe), REPO_ROOT),
        'bytes': size,
        'parameters': sum(p.numel() for p in net.parameters()),
        'architecture': '3 -> [xyz, sin/cos(pi*f*xyz), f=1,2,4,8] (27) -> 64 -> 64 -> 64 (Softplus beta 20) -> sdf 1, color 3 (sigmoid); '
                        'input normalised inside the graph: (p - center) / half',
        'normalisation': {'center_m': [round(v, 6) for v in center.tolist()], 'half_m': half},
        'bounds': bounds,
        'seed': args.seed,
        'steps': args.steps,
        'batch_per_set': args.batch,
        'samples': info['counts'],
        'near_sigmas_m': info['nearSigmasM'],
        'fit': {
            'note': 'errors of the fitted network (float32 torch) against the recipe, in mm; color in linear RGB 0..1',
            'surface_abs_sdf_mm': stats_mm(sdf_t - td),
            'band_10mm_abs_sdf_mm': stats_mm(sdf_n[band] - nd[band]),
            'uniform_abs_sdf_mm': stats_mm(sdf_u - ud),
            'inside_outside_agreement_uniform': round(((sdf_u < 0) == (ud < 0)).double().mean().item(), 6),
            'surface_color_abs': {'mean': round((col_t - tc).abs().mean().item(), 5), 'max': round((col_t - tc).abs().max().item(), 5)},
            'surface_points': int(tp.shape[0]),
        },
        'probes': [{'point': [round(v, 7) for v in p.tolist()], 'sdf': s.item(), 'color': c.tolist()}
                   for p, s, c in zip(probes_p, probe_sdf.flatten(), probe_col)],
        'torch': torch.__version__,
        'onnx': onnx.__version__,
        'opset': 17,
        'threads': torch.get_num_threads(),
        'blas': loaded_blas(),
        'seconds': round(time.time() - t0, 1),
    }
    with open(args.report, 'w') as f:
        json.dump(report, f, indent=2)
        f.write('\n')
    print(json.dumps(report['fit'], indent=2))
    print(f'wrote {args.out} ({size} bytes) and {args.report} in {report["seconds"]} s')
    if tmp is not None:
        tmp.cleanup()


if __name__ == '__main__':
    main()
