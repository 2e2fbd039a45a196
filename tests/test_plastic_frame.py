"""A fixed-base portal frame of perfectly plastic (H = 0) fibres traced past yield.

Plastic collapse of the sway mechanism against simple plastic theory, and the
reported failure of Newton's method just past the peak when constant gravity loads
make the path descend (kept as a strict expected failure until it is fixed).
"""
import numpy as np

import largerot as lr

HEIGHT, SPAN = 4.0, 6.0


def _portal(segments, corner_load=0.0, beam_load=0.0):
    """Fixed-base portal, IPE-like I-shape (300 × 150 × 7.1 × 10.7 mm), S355, H = 0.

    Lateral reference load 1 kN at the left corner B (λ in kN); optional constant
    downward loads ``corner_load`` (N) at both corners and ``beam_load`` (N/m) on the beam.
    """
    s = lr.Structure()
    sec = lr.FibreSection.i_shape(E=210e9, fy=355e6, h=0.3, b=0.15, tw=0.0071, tf=0.0107, H=0.0)
    a, b, c, d = s.node(0, 0), s.node(0, HEIGHT), s.node(SPAN, HEIGHT), s.node(SPAN, 0)
    s.beam(a, b, sec, segments=segments)
    beam = s.beam(b, c, sec, segments=segments)
    s.beam(c, d, sec, segments=segments)
    s.fix(a)
    s.fix(d)
    s.load(b, fx=1e3)
    if corner_load:
        s.load(b, fy=-corner_load, constant=True)
        s.load(c, fy=-corner_load, constant=True)
    if beam_load:
        s.line_load(beam, qy=-beam_load, constant=True)
    return s, sec, b


def test_sway_mechanism_load_of_a_fine_portal_by_displacement_control():
    # Sway mechanism of a fixed-base portal: hinges at the four column ends, each
    # turning by θ while the top moves h·sin θ, so H·h·cos θ = 4·Mp (Neal 1977,
    # *The Plastic Methods of Structural Analysis*, ch. 2, with the work equation
    # written for finite θ; from memory). Default options, 40 elements per member,
    # traced to a sway of 0.4 m, ≥ 10 times the sway at first yield.
    s, sec, b = _portal(40)
    path = lr.trace(s, lr.by_displacement(b, "ux", 0.01), max_steps=40)
    assert path.status == "max_steps", path.message
    ux, H = path.displacement(b, "ux"), path.load_factor * 1e3
    first = [e.load_factor * 1e3 for e in path.events if e.kind == "first yield"]
    assert len(first) == 1
    sway_y = np.interp(first[0], H[: np.argmax(H > first[0]) + 1], ux[: np.argmax(H > first[0]) + 1])
    assert ux[-1] >= 10 * sway_y
    theta = np.arcsin(ux[-1] / HEIGHT)
    ratio = H[-1] / (4 * sec.Mp / (HEIGHT * np.cos(theta)))
    # A displacement-based fibre element spreads each hinge over one element, so the
    # load lies above the mechanism load by O(h): measured +6.9 %, +3.3 %, +1.47 %,
    # +0.55 % with 10, 20, 40, 80 elements per member (the column axial forces of
    # ±(4/6)·H, N/Np ≈ 0.08, lower Mp by well under 1 %; the element error dominates).
    # 40 elements: demanded from above and within 2 %.
    assert 1.0 < ratio < 1.02


def test_gravity_portal_traced_past_its_peak_by_displacement_control():
    # Constant 300 kN on each corner: P-Δ makes the path descend after the peak.
    # Before Newton's relaxation (solvers/newton.py) the trace failed at a sway of
    # 0.63 m, fibres at a fully yielded hinge cycling between loading and unloading.
    s, sec, b = _portal(40, corner_load=300e3)
    path = lr.trace(s, lr.by_displacement(b, "ux", 0.01), max_steps=80)
    assert path.status == "max_steps", path.message
    ux, H = path.displacement(b, "ux"), path.load_factor * 1e3
    assert ux[-1] >= 0.79
    # Rigid-plastic sway mechanism with P-Δ (Horne, plastic theory of frames; from
    # memory): work on the four column hinges turning by θ, the corners moving
    # h·cos θ·dθ across and Δ·dθ down, gives H·h·cos θ = ΣMp,N − 2·P·Δ, Δ = h·sin θ.
    # Mp,N = Mp − N²/(4·tw·fy) for an I-shape whose plastic neutral axis lies in the
    # web (from memory); the columns carry N = P ∓ V, V = 2·Mp,N/L the beam's shear
    # (beam end moments Mp,N at the column tops), solved by fixed-point iteration.
    P, tw, fy = 300e3, 0.0071, 355e6
    Mr = sec.Mp
    for _ in range(20):
        V = 2 * Mr / SPAN
        Mr = 0.5 * (2 * sec.Mp - ((P + V) ** 2 + (P - V) ** 2) / (4 * tw * fy))
    far = ux >= 0.4 - 1e-9
    theta = np.arcsin(ux[far] / HEIGHT)
    H_ref = (4 * Mr - 2 * P * ux[far]) / (HEIGHT * np.cos(theta))
    # Slope dH/dΔ from 0.4 to 0.8 m: the P-Δ line's, measured within 0.9 %.
    slope = np.polyfit(ux[far], H[far], 1)[0]
    slope_ref = np.polyfit(ux[far], H_ref, 1)[0]
    assert abs(slope / slope_ref - 1) < 0.02
    # Level: above the line by the hinge spread over one element, +1.47 % of 4·Mp/h
    # without gravity at 40 elements (test above); measured +2.0 % to +2.3 % of
    # 4·Mp,N/h here over 0.4–0.8 m. Demanded from above, within 3 %.
    offset = (H[far] - H_ref) / (4 * Mr / HEIGHT)
    assert np.all(offset > 0.0) and np.all(offset < 0.03)
