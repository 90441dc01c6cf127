"""Shared plumbing of the report's pictures: matplotlib without a screen, figures as file bytes."""
from __future__ import annotations

import io


def pyplot():
    """matplotlib.pyplot on the Agg backend, or None when matplotlib is not installed."""
    try:
        import matplotlib
        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        return None
    return plt


def figure_files(fig, stem: str, dpi: int = 120) -> dict:
    """{stem.png: bytes, stem.svg: bytes} of a figure, which is then closed."""
    import matplotlib.pyplot as plt
    out = {}
    for ext in ("png", "svg"):
        buf = io.BytesIO()
        fig.savefig(buf, format=ext, dpi=dpi, bbox_inches="tight")
        out[f"{stem}.{ext}"] = buf.getvalue()
    plt.close(fig)
    return out
