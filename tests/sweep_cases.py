"""Build functions of the sweep tests, importable by worker processes."""
from largerot import examples


def arch(rise, segments=12):
    """The built-in shallow arch (λ in kN at the crown)."""
    return examples.shallow_arch(rise=rise, segments=int(segments)).structure


def arch_or_trouble(rise, trouble=""):
    """The arch, or a case that raises, has bad parameters, or traces slowly."""
    if trouble == "raise":
        raise RuntimeError("the build function broke")
    # "slow": 9,000 elements, about 0.17 s a point (40 points 6.9 s) against 0.004 s for 12;
    # 3,000 elements had become fast enough (40 points in 1.6 s) to race a 1.5 s timeout
    return examples.shallow_arch(rise=rise, segments=9000 if trouble == "slow" else 12).structure


def imperfect_arch(amplitude, rise=0.3, segments=32):
    """The shallow arch moved by ``amplitude`` (m) along its first buckling mode."""
    import largerot as lr
    s = examples.shallow_arch(rise=rise, segments=int(segments)).structure
    return lr.imperfect(s, lr.buckling(s).modes[0], amplitude)
