#!/usr/bin/python3
"""Wrap a trained PyTorch implicit field and export it to ONNX the way Fieldkiln reads it.

Fieldkiln's input convention for a neural field (see docs/exporting-from-pytorch.md):

* one input ``points``: float32 [N,3], N a dynamic axis, world coordinates in metres, right-handed, +Y up;
* exactly one of these outputs, float32 [N,1]:
    ``sdf``        signed distance in metres, negative inside;
    ``density``    volume density >= 0, higher is more solid, the surface where it crosses the level;
    ``occupancy``  the occupancy *logit* (probability inside = sigmoid(logit)), the surface at logit 0;
* optionally ``color``: float32 [N,3], linear RGB (not sRGB) in 0..1, at the same points;
* ``metadata_props``: ``field.kind``, ``field.bounds`` (``xmin,ymin,zmin,xmax,ymax,zmax`` in metres),
  ``field.units`` (``m``) and, optionally, ``field.level``.

Networks are rarely trained in exactly that frame: they see points in a unit cube, Z up, or millimetres, and
they output probabilities or sRGB colors. :class:`FieldkilnWrapper` puts every such conversion *inside* the
exported graph, so the ONNX file itself speaks metres, +Y up, and the convention's output meanings.

Use from your own code::

    from export_example import FieldkilnWrapper, export_field
    wrapper = FieldkilnWrapper(my_net, kind='sdf', world_to_net_offset=center, world_to_net_scale=1 / half)
    export_field(wrapper, 'prop_sdf.onnx', bounds=(-0.25, -0.03, -0.25, 0.25, 0.53, 0.25))

or run this file to export a small worked example (an analytic torus standing in for a network trained in the
unit cube, with Z up and an sRGB color head)::

    /usr/bin/python3 assets/demo/neural/export_example.py --out /tmp/example_sdf.onnx
    node app/cli/fieldkiln.mjs inspect /tmp/example_sdf.onnx

Tested with Debian's python3-torch 1.13 and python3-onnx 1.12 (``apt-get install python3-torch python3-onnx``).
"""
import argparse
import math

import onnx
import torch
from torch import nn

KINDS = ('sdf', 'density', 'occupancy')

# Rows are the network's axes written in world axes, so net = M @ world. A network trained with +Z up
# (x right, y forward, z up) sees world +Y as its +Z, and world +Z (towards the viewer) as its -Y.
Z_UP_FROM_Y_UP = ((1.0, 0.0, 0.0),
                  (0.0, 0.0, -1.0),
                  (0.0, 1.0, 0.0))


class FieldkilnWrapper(nn.Module):
    """``points`` [N,3] in world metres, +Y up  ->  ``(value [N,1],)`` or ``(value [N,1], color [N,3])``.

    Args:
        net: the trained module. Called with points in *its* training frame, [N,3]. It returns either a tensor
            [N,1] (value only), a tensor [N,4] (value, then 3 color channels), or a tuple ``(value, color)``.
        kind: ``'sdf'``, ``'density'`` or ``'occupancy'``; the name of the value output.
        world_to_net_offset: subtracted from world points before scaling (metres), e.g. the bounds' center.
        world_to_net_scale: multiplies the offset points; a uniform number (keep it uniform for an SDF, or the
            distance is no longer a distance). Points in metres times this scale are the network's units.
        world_to_net_rotation: optional 3x3 rotation applied last (see ``Z_UP_FROM_Y_UP``).
        value_mode: how to read the network's raw value:
            ``'sdf'``: raw is a signed distance in network units; divided by the scale to give metres.
            ``'sdf_flipped'``: same, but the network was trained positive inside; the sign is flipped.
            ``'density'``: raw is already a density >= 0 (e.g. the network ends in a softplus/ReLU).
            ``'density_raw'``: raw is a pre-activation density; ``softplus`` is applied (use the activation
                your renderer used in training; NeRF-style code often uses ReLU or softplus).
            ``'logit'``: raw is an occupancy logit, positive inside.
            ``'probability'``: raw is an occupancy probability in 0..1; converted to a logit (clamped).
        color_mode: ``None`` (no color output), ``'linear'`` (already linear RGB 0..1), ``'srgb'`` (sRGB 0..1,
            converted to linear), ``'logit'`` (pre-sigmoid; sigmoid applied, result taken as linear).
    """

    def __init__(self, net, kind, *, world_to_net_offset=(0.0, 0.0, 0.0), world_to_net_scale=1.0,
                 world_to_net_rotation=None, value_mode=None, color_mode=None):
        super().__init__()
        if kind not in KINDS:
            raise ValueError(f'kind must be one of {KINDS}, got {kind!r}')
        self.net = net
        self.kind = kind
        self.value_mode = value_mode or {'sdf': 'sdf', 'density': 'density', 'occupancy': 'logit'}[kind]
        self.color_mode = color_mode
        self.scale = float(world_to_net_scale)
        # Buffers, not Python constants, so they show up as initializers in the ONNX graph.
        self.register_buffer('offset', torch.tensor(world_to_net_offset, dtype=torch.float32).reshape(1, 3))
        rot = torch.eye(3) if world_to_net_rotation is None else torch.tensor(world_to_net_rotation, dtype=torch.float32)
        self.register_buffer('rotation_t', rot.t().contiguous())

    def forward(self, points):
        q = ((points - self.offset) * self.scale) @ self.rotation_t  # world metres -> the network's frame
        out = self.net(q)
        if isinstance(out, (tuple, list)):
            raw, rgb = out[0], (out[1] if len(out) > 1 else None)
        elif out.shape[1] > 1:
            raw, rgb = out[:, :1], out[:, 1:4]
        else:
            raw, rgb = out, None
        mode = self.value_mode
        if mode == 'sdf':
            value = raw / self.scale  # network units -> metres
        elif mode == 'sdf_flipped':
            value = -raw / self.scale
        elif mode == 'density':
            value = raw
        elif mode == 'density_raw':
            value = nn.functional.softplus(raw)
        elif mode == 'logit':
            value = raw
        elif mode == 'probability':
            p = raw.clamp(1e-6, 1 - 1e-6)
            value = torch.log(p) - torch.log1p(-p)
        else:
            raise ValueError(f'unknown value_mode {mode!r}')
        if self.color_mode is None:
            return (value,)
        if rgb is None:
            raise ValueError('color_mode is set but the network returned no color')
        if self.color_mode == 'logit':
            rgb = torch.sigmoid(rgb)
        elif self.color_mode == 'srgb':
            c = rgb.clamp(0, 1)  # IEC 61966-2-1 sRGB decoding
            rgb = torch.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)
        elif self.color_mode != 'linear':
            raise ValueError(f'unknown color_mode {self.color_mode!r}')
        return value, rgb.clamp(0, 1)


def export_field(wrapper, path, *, bounds, level=None, opset=17, example_points=None):
    """Exports ``wrapper`` to ``path`` with a dynamic batch axis and Fieldkiln's metadata, then checks the file.

    Args:
        wrapper: a :class:`FieldkilnWrapper` (or any module with ``kind`` and ``color_mode`` attributes and the
            same outputs).
        bounds: ``(xmin, ymin, zmin, xmax, ymax, zmax)`` in metres: the box the network was trained in. Fieldkiln
            meshes this box by default and treats the world outside it as outside.
        level: the iso-level, written as ``field.level``. Leave it ``None`` for sdf/occupancy (0 applies); a
            density field should carry one, or every user must pass ``--level``.
        opset: ONNX opset; 13..17 are known to load.
        example_points: a [N,3] float tensor used for tracing; defaults to 8 points in the bounds.
    Returns:
        the checked ``onnx.ModelProto``.
    """
    if len(bounds) != 6 or not all(math.isfinite(b) for b in bounds) or not all(bounds[i] < bounds[i + 3] for i in range(3)):
        raise ValueError(f'bounds must be xmin,ymin,zmin,xmax,ymax,zmax with min < max, got {bounds}')
    wrapper = wrapper.eval()
    if example_points is None:
        lo, hi = torch.tensor(bounds[:3]), torch.tensor(bounds[3:])
        example_points = lo + (hi - lo) * torch.rand(8, 3, generator=torch.Generator().manual_seed(0))
    names = [wrapper.kind] + (['color'] if wrapper.color_mode is not None else [])
    with torch.no_grad():
        torch.onnx.export(
            wrapper, (example_points.float(),), path,
            input_names=['points'], output_names=names,
            # The first axis is symbolic, so any N >= 1 works. Fieldkiln evaluates in large batches.
            dynamic_axes={name: {0: 'N'} for name in ['points'] + names},
            opset_version=opset, do_constant_folding=True)

    model = onnx.load(path)
    meta = {
        'field.kind': wrapper.kind,
        'field.bounds': ','.join(repr(float(b)) for b in bounds),  # repr: shortest exact decimal
        'field.units': 'm',
    }
    if level is not None:
        meta['field.level'] = repr(float(level))
    del model.metadata_props[:]
    for key, value in meta.items():
        entry = model.metadata_props.add()
        entry.key, entry.value = key, value
    onnx.checker.check_model(model)
    onnx.save(model, path)
    return model


class _UnitCubeTorus(nn.Module):
    """Stands in for a trained network: a torus SDF in a unit cube, Z up, with an sRGB color output.

    Its ring lies in the network's XY plane (Z up), radius 0.6, tube 0.2, in units where the object's
    half-size is 1. Color (sRGB) runs from terracotta at the bottom to cream at the top.
    """

    def forward(self, q):
        ring = torch.sqrt(q[:, 0:1] ** 2 + q[:, 1:2] ** 2) - 0.6
        sdf = torch.sqrt(ring ** 2 + q[:, 2:3] ** 2) - 0.2
        t = (q[:, 2:3] + 0.2) / 0.4
        srgb = torch.cat([0.75 + 0.2 * t, 0.4 + 0.45 * t, 0.3 + 0.5 * t], dim=1).clamp(0, 1)
        return sdf, srgb


def main():
    ap = argparse.ArgumentParser(description='Export a worked example field for Fieldkiln.')
    ap.add_argument('--out', required=True, help='where to write the .onnx file')
    args = ap.parse_args()
    torch.manual_seed(0)
    # The object is 0.5 m across, standing on the floor: its world center is (0, 0.1, 0) and its half-size
    # 0.25 m, so world metres -> network units is (p - center) * 4, then Y up -> Z up.
    center, half = (0.0, 0.1, 0.0), 0.25
    wrapper = FieldkilnWrapper(_UnitCubeTorus(), 'sdf', world_to_net_offset=center, world_to_net_scale=1 / half,
                               world_to_net_rotation=Z_UP_FROM_Y_UP, color_mode='srgb')
    # The torus reaches 0.8 network units (0.2 m) from its center; keep a margin.
    bounds = (-0.25, 0.0, -0.25, 0.25, 0.2, 0.25)
    export_field(wrapper, args.out, bounds=bounds, level=0)
    print(f'wrote {args.out}; check it with: node app/cli/fieldkiln.mjs inspect {args.out}')


if __name__ == '__main__':
    main()
