"""How closely a drawing, as the arm would make it, matches the picture.

The drawing is rendered from the joint angles of the stream (forward
kinematics, so every error of the motion stage shows), mapped back into the
picture's pixel frame, and compared with the picture in linear reflectance.
"""

from dataclasses import dataclass

import cv2
import numpy as np

from .errors import InkreachError

__all__ = ["Fidelity", "fidelity", "fidelity_images", "plan_fidelity", "render_coverage",
           "drawn_polylines", "WORK_SIDE", "BLUR_PEN_WIDTHS"]

#: Long side, in pixels, of the grid the comparison is made on.
WORK_SIDE = 512
#: Default blur, in pen widths: about the spacing of a hatch (common practice).
BLUR_PEN_WIDTHS = 3.5

_SSIM_SIGMA = 1.5   # Wang et al. (2004), section III-C
_SSIM_WIN = 11      # the Gaussian window that sigma implies (skimage: 2*int(3.5*1.5+0.5)+1)


@dataclass(frozen=True)
class Fidelity:
    """The drawing-fidelity score.

    Attributes
    ----------
    ssim : float
        Structural similarity (mean SSIM, in [-1, 1], 1 = identical) of the
        drawn and target reflectance, both blurred by ``blur_px``.
    tone_error : float
        Mean absolute difference of the blurred reflectances, in [0, 1]
        (0 = the same tone everywhere).
    blur_px : float
        Gaussian sigma of the blur, pixels of the comparison grid.
    shape : tuple of int
        ``(H, W)`` of the comparison grid.
    """

    ssim: float
    tone_error: float
    blur_px: float
    shape: tuple

    def as_dict(self, digits=4):
        """``{"ssim": ..., "tone_error": ...}`` rounded to ``digits`` decimals."""
        return {"ssim": round(float(self.ssim), digits),
                "tone_error": round(float(self.tone_error), digits)}


def _blur(img, sigma):
    if sigma <= 0:
        return img
    return cv2.GaussianBlur(img, (0, 0), sigmaX=float(sigma), sigmaY=float(sigma),
                            borderType=cv2.BORDER_REFLECT)


def fidelity_images(drawn_reflectance, target_reflectance, blur_px):
    """Compare a drawn and a target reflectance image.

    Both images are blurred alike with a Gaussian of sigma ``blur_px`` (a
    hatch or stipple is meant to be seen from a distance, where its lines
    merge into tone), then compared by the mean absolute difference and by
    SSIM [1]_ with the paper's constants (``K1 = 0.01``, ``K2 = 0.03``,
    Gaussian window sigma 1.5, dynamic range 1) as implemented by
    :func:`skimage.metrics.structural_similarity` [2]_.

    Parameters
    ----------
    drawn_reflectance, target_reflectance : array_like, shape (H, W)
        Linear reflectance in [0, 1] (1 = white paper); for a drawing,
        ``1 - coverage``.
    blur_px : float
        Gaussian sigma, pixels (0: no blur).

    Returns
    -------
    Fidelity

    Raises
    ------
    InkreachError
        When the images differ in shape or are too small to compare.

    References
    ----------
    .. [1] Z. Wang, A. C. Bovik, H. R. Sheikh and E. P. Simoncelli, "Image
       quality assessment: from error visibility to structural similarity",
       IEEE Transactions on Image Processing 13(4), 600-612, 2004.
    .. [2] S. van der Walt et al., "scikit-image: image processing in
       Python", PeerJ 2:e453, 2014.

    Examples
    --------
    >>> import numpy as np
    >>> y = np.linspace(0, 1, 64 * 64).reshape(64, 64)
    >>> f = fidelity_images(y, y, 2.0)
    >>> f.ssim, f.tone_error
    (1.0, 0.0)
    """
    from skimage.metrics import structural_similarity

    a = np.asarray(drawn_reflectance, dtype=np.float32)
    b = np.asarray(target_reflectance, dtype=np.float32)
    if a.shape != b.shape or a.ndim != 2:
        raise InkreachError(f"cannot compare a {a.shape} drawing with a {b.shape} picture; "
                            "give two 2-D images of the same shape")
    if min(a.shape) < 3:
        raise InkreachError(f"a {a.shape} image is too small to compare; give at least 3x3")
    blur = max(float(blur_px), 0.0)
    ab = np.clip(_blur(a, blur), 0.0, 1.0).astype(np.float64)
    bb = np.clip(_blur(b, blur), 0.0, 1.0).astype(np.float64)
    tone = float(np.mean(np.abs(ab - bb)))
    small = min(a.shape)
    if small >= _SSIM_WIN:
        s = structural_similarity(ab, bb, data_range=1.0, gaussian_weights=True,
                                  sigma=_SSIM_SIGMA, use_sample_covariance=False)
    else:  # a tiny picture: the largest odd uniform window that fits
        s = structural_similarity(ab, bb, data_range=1.0, win_size=small - 1 + small % 2,
                                  use_sample_covariance=False)
    return Fidelity(ssim=float(s), tone_error=tone, blur_px=blur, shape=tuple(a.shape))


def render_coverage(polylines, shape, pen_px, supersample=4):
    """Ink coverage of polylines drawn with a round pen (see
    :func:`inkreach.trace.render_strokes`, which this is).

    Examples
    --------
    >>> import numpy as np
    >>> cov = render_coverage([np.array([[-5.0, 9.5], [25.0, 9.5]])], (20, 20), 3.0)
    >>> round(float(cov.sum(axis=0).mean()), 2)   # 3 px of ink down each column
    3.0
    """
    from .trace import render_strokes
    return render_strokes(polylines, shape, pen_px, supersample=supersample)


def drawn_polylines(stream, arm):
    """The pen-down paths the arm draws, from the stream's joint angles.

    Consecutive pen-down rows of the same stroke index (``stream.stroke``)
    form one path; the pen position of each row is ``arm.fk(stream.q)``.

    Parameters
    ----------
    stream : JointStream
    arm : Arm

    Returns
    -------
    list of ndarray, shape (N, 2)
        Paths in arm mm.
    """
    q = np.asarray(stream.q, dtype=float).reshape(-1, 2)
    if len(q) == 0:
        return []
    xy = np.asarray(arm.fk(q), dtype=float).reshape(-1, 2)
    down = np.asarray(stream.pen).astype(bool)
    sid = getattr(stream, "stroke", None)
    sid = np.zeros(len(q), np.int64) if sid is None else np.asarray(sid, dtype=np.int64)
    # a new path starts where the pen comes down or the stroke index changes
    start = down.copy()
    start[1:] &= ~(down[:-1] & (sid[1:] == sid[:-1]))
    label = np.cumsum(start)
    idx = np.flatnonzero(down)
    if len(idx) == 0:
        return []
    lab = label[idx]
    cuts = np.flatnonzero(np.diff(lab)) + 1
    return [xy[g] for g in np.split(idx, cuts)]


def _parts(plan_or_parts):
    if isinstance(plan_or_parts, (tuple, list)) and len(plan_or_parts) == 3:
        stream, arm, placement = plan_or_parts
    else:
        try:
            stream, arm, placement = (plan_or_parts.stream, plan_or_parts.arm,
                                      plan_or_parts.placement)
        except AttributeError:
            raise InkreachError("fidelity needs a plan or a (stream, arm, placement) "
                                "triple") from None
    return stream, arm, placement


def fidelity(plan_or_parts, image=None, *, blur_mm=None, max_side=WORK_SIDE):
    """Score how closely the arm's drawing matches the picture.

    The drawing is rendered as the arm would make it: the pen positions of
    the stream's joint angles (forward kinematics), pen-down rows joined
    within each stroke, mapped into the picture's pixels by the inverse of
    the placement and drawn at the pen's width as ink on white paper. Its
    reflectance ``1 - coverage`` is compared with the picture's linear
    luminance by :func:`fidelity_images`, on a grid whose long side is at
    most ``max_side`` pixels.

    Parameters
    ----------
    plan_or_parts : Plan or tuple
        A plan, or a ``(stream, arm, placement)`` triple.
    image : str, os.PathLike, PIL.Image.Image or ndarray
        The picture the plan was made from (as given to the planner).
    blur_mm : float, optional
        Gaussian sigma of the comparison blur, mm on paper; by default
        ``BLUR_PEN_WIDTHS`` pen widths, about the spacing of a hatch.
    max_side : int, optional
        Long side of the comparison grid, pixels.

    Returns
    -------
    Fidelity

    Raises
    ------
    InkreachError
        When no picture is given or the parts are not a plan.

    Notes
    -----
    Linear reflectance is what adds up when ink lines blur together: a
    pattern covering a fraction ``a`` of the paper with black ink reflects
    ``1 - a`` of the light (the Murray-Davies relation [1]_).

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", Journal of
       the Franklin Institute 221(6), 721-744, 1936.
    .. [2] Z. Wang, A. C. Bovik, H. R. Sheikh and E. P. Simoncelli, "Image
       quality assessment: from error visibility to structural similarity",
       IEEE Transactions on Image Processing 13(4), 600-612, 2004.
    """
    from .trace import load_image

    if image is None:
        raise InkreachError("fidelity needs the picture the plan was made from; pass image=")
    stream, arm, placement = _parts(plan_or_parts)
    pic = load_image(image, max_side=max_side)
    h, w = pic.shape
    sx, sy = (float(v) for v in pic.scale_xy)
    inv = placement.inverse()
    paths = []
    for p in drawn_polylines(stream, arm):
        uv = p @ inv[:, :2].T + inv[:, 2]                 # original picture pixels
        paths.append((uv + 0.5) * (sx, sy) - 0.5)         # comparison-grid pixels
    mm_per_px = float(placement.scale) / np.sqrt(sx * sy)  # mm per comparison pixel
    pen_px = float(arm.pen.width_mm) / mm_per_px
    if blur_mm is None:
        blur_px = BLUR_PEN_WIDTHS * pen_px
    else:
        blur_px = float(blur_mm) / mm_per_px
    cov = render_coverage(paths, (h, w), pen_px)
    return fidelity_images(1.0 - cov, pic.luminance, blur_px)


def plan_fidelity(plan, image):
    """The fidelity figures the planner puts in ``stats["fidelity"]``.

    Parameters
    ----------
    plan : Plan
    image : str, os.PathLike, PIL.Image.Image or ndarray
        The picture the plan was made from.

    Returns
    -------
    dict
        ``{"ssim": float, "tone_error": float}``, rounded to 4 decimals; for
        a style that renders lines, the line likeness instead (see
        :mod:`inkreach.fidelity_lines`).
    """
    from .trace import style_renders
    if style_renders(plan.style) == "lines":
        from .fidelity_lines import plan_line_likeness
        return plan_line_likeness(plan, image)
    return fidelity(plan, image).as_dict(4)
