"""Meshes finer than double precision can resolve.

The tangent of a beam chain meshed into n elements of length h carries the chain's
bending stiffness (∼EI/L³) as a small difference of element stiffnesses (∼EI/h³):
rounding the assembled entries and the factorisation perturbs it by about
eps·(L/h)³ relative, so Newton's corrections lose accuracy as n grows. Measured on
the 8 m lighting pole (clamped, P·L²/EI = 2.4, 8 load steps; LDLᵀ back end;
``benchmarks/mesh_resolution.py``): the linear tip deflection from the factorised
tangent at rest is off by 1e-5 at 1,000 elements, 2e-3 at 10,000 and 300 % at
15,000; refining the solve in extended precision does not help (2 % at 10,000, no
convergence beyond: the stored tangent itself is that far off). The trace takes 2.6
iterations per point at 10,000 elements, 8–11 at 15,000–20,000, and fails at
30,000 (after 23 s).

A clamped chain (a cantilever) is the worst case; supports or branches along a
member end its chain. :func:`check_resolution` warns once per model when a chain is
longer than ``CHAIN_LIMIT`` elements.
"""
from __future__ import annotations

import warnings

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

__all__ = ["MeshWarning", "beam_chains", "check_resolution", "CHAIN_LIMIT"]

#: Longest unbranched beam chain (elements) without a warning: the lighting pole
#: takes 2.6 iterations per point at 10,000 elements, 11 at 15,000, fails at 30,000.
CHAIN_LIMIT = 10_000


class MeshWarning(UserWarning):
    """A mesh finer than the tangent can resolve in double precision."""


def beam_chains(model) -> tuple[np.ndarray, np.ndarray]:
    """Unbranched chains of beam elements.

    Two beam elements belong to one chain when they share a node that only they
    connect (no other beam, bar or cable) and that has no restraint, spring or contact.

    Returns
    -------
    labels : ndarray of int, shape (n_beam,)
        Chain of each beam element.
    sizes : ndarray of int, shape (n_chains,)
        Elements per chain.
    """
    nodes = np.asarray(model.beam_nodes)
    n_el = len(nodes)
    if n_el == 0:
        return np.zeros(0, int), np.zeros(0, int)
    n_nodes = model.n_nodes
    beams = np.bincount(nodes.ravel(), minlength=n_nodes)
    bars = np.bincount(np.asarray(model.bar_nodes, int).ravel(), minlength=n_nodes)
    held = np.zeros(n_nodes, bool)
    for dofs in (model.fixed, model.spring_dofs):
        held[np.asarray(dofs, int) // 3] = True
    held[np.asarray(model.contact_nodes, int)] = True
    inner = (beams == 2) & (bars == 0) & ~held
    # each inner node joins the two beam elements at it
    ends = nodes.ravel()
    element = np.repeat(np.arange(n_el), 2)
    keep = inner[ends]
    order = np.argsort(ends[keep], kind="stable")
    pairs = element[keep][order].reshape(-1, 2)
    graph = sp.coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(n_el, n_el))
    _, labels = connected_components(graph, directed=False)
    return labels, np.bincount(labels)


def check_resolution(model) -> None:
    """Warn (:class:`MeshWarning`) if a beam chain is longer than ``CHAIN_LIMIT`` elements."""
    if len(model.beam_nodes) <= CHAIN_LIMIT:
        return                               # no chain can be longer (and a small model's set-up stays short)
    labels, sizes = beam_chains(model)
    if not len(sizes) or sizes.max() <= CHAIN_LIMIT:
        return
    chain = int(np.argmax(sizes))
    elements = np.flatnonzero(labels == chain)
    members = sorted({m.id for m in model.members if m.kind == "beam"
                      and np.isin(m.elements, elements).any()})
    warnings.warn(
        f"Beam member(s) {', '.join(map(str, members))} form an unbranched chain of "
        f"{sizes[chain]:,} elements: in double precision the tangent resolves the bending "
        f"of a chain of up to about {CHAIN_LIMIT:,} (largerot.mesh_check); Newton may "
        f"converge slowly or not at all, and the stability check may be wrong. Fewer segments give the same path (40 per member "
        f"are within 2e-3 of the elastica).", MeshWarning, stacklevel=3)
