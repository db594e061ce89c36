"""How closely a drawing, as the arm would make it, matches the picture.

The drawing is rendered from the joint angles of the stream (forward
kinematics, so every error of the motion stage shows), mapped back into the
picture's pixel frame, and compared with the picture in linear reflectance.
"""

from dataclasses import dataclass

import cv2
import numpy as np

from ..errors import InkreachError

__all__ = ["Fidelity", "fidelity", "fidelity_images", "plan_fidelity", "render_coverage",
           "drawn_polylines", "WORK_SIDE", "BLUR_PEN_WIDTHS", "ToneLikeness", "tone_likeness",
           "tone_likeness_images", "cie_lightness", "TONE_BLUR_MM", "TONE_TARGETS"]

#: Long side, in pixels, of the grid the comparison is made on.
WORK_SIDE = 512
#: Default blur, in pen widths: about the spacing of a hatch (our choice, so that hatch
#: lines merge into tone, as the eye merges them at reading distance).
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
    from ..trace import render_strokes
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
    cov, pic, mm_per_px, pen_px = _drawn_on_picture(plan_or_parts, image, max_side)
    if blur_mm is None:
        blur_px = BLUR_PEN_WIDTHS * pen_px
    else:
        blur_px = float(blur_mm) / mm_per_px
    return fidelity_images(1.0 - cov, pic.luminance, blur_px)


def _comparison_picture(plan_or_parts, image, max_side):
    """The picture on the comparison grid, as the planner saw it.

    A file, image or array is first loaded at the plan's own ``max_side``
    (when the plan records one) and then shrunk, exactly as the planner's
    loaded picture is, so figures recomputed from the files equal the ones
    the plan recorded.
    """
    from ..trace import Picture, load_image

    if not isinstance(image, Picture):
        work = (getattr(plan_or_parts, "options", None) or {}).get("max_side", ...)
        if work is not ...:
            image = load_image(image, max_side=work)
    return load_image(image, max_side=max_side)


def _on_comparison_grid(plan_or_parts, image, max_side, what="fidelity"):
    """The comparison picture and the drawn pen paths on its grid.

    Returns ``(picture, paths, mm_per_px, pen_px)``: paths in the picture's
    pixels, millimetres on paper per pixel, and the pen width in pixels.
    """
    if image is None:
        raise InkreachError(f"{what} needs the picture the plan was made from; pass image=")
    stream, arm, placement = _parts(plan_or_parts)
    pic = _comparison_picture(plan_or_parts, image, max_side)
    sx, sy = (float(v) for v in pic.scale_xy)
    inv = placement.inverse()
    paths = []
    for p in drawn_polylines(stream, arm):
        uv = p @ inv[:, :2].T + inv[:, 2]                 # original picture pixels
        paths.append((uv + 0.5) * (sx, sy) - 0.5)         # comparison-grid pixels
    mm_per_px = float(placement.scale) / np.sqrt(sx * sy)  # mm per comparison pixel
    return pic, paths, mm_per_px, float(arm.pen.width_mm) / mm_per_px


def _drawn_on_picture(plan_or_parts, image, max_side, supersample=4):
    """Coverage of the arm's drawing on the picture's grid, and the grid.

    Returns ``(coverage, picture, mm_per_px, pen_px)``.
    """
    pic, paths, mm_per_px, pen_px = _on_comparison_grid(plan_or_parts, image, max_side)
    cov = render_coverage(paths, pic.shape, pen_px, supersample=supersample)
    return cov, pic, mm_per_px, pen_px


#: Blur of the tone comparison, mm on paper: a drawing seen from arm's length.
TONE_BLUR_MM = 1.5
#: What a tone style should reach on photos: ``range_ratio`` at least, ``|delta_lightness|``
#: at most, ``ssim`` at least (bounds of this project, chosen so that the blurred drawing
#: reads as the photo: four fifths of its tonal range, a lightness step of about three
#: just-noticeable differences, and the SSIM of a mild JPEG).
TONE_TARGETS = {"range_ratio": 0.8, "delta_lightness": 6.0, "ssim": 0.85}

_EPS_LAB = (6.0 / 29.0) ** 3          # CIE 1976: the cube-root part starts above this Y/Yn
_KAPPA_LAB = 1.0 / (3.0 * (6.0 / 29.0) ** 2)


def cie_lightness(y):
    """CIE 1976 lightness L* of relative luminance ``y`` (white ``Yn = 1``).

    Parameters
    ----------
    y : array_like
        Relative luminance in [0, 1] (linear light; 1 = white paper).

    Returns
    -------
    ndarray
        L* in [0, 100].

    References
    ----------
    .. [1] CIE 15:2004, *Colorimetry*, 3rd ed., section 8.2.1 (CIELAB):
       ``L* = 116 f(Y/Yn) - 16`` with ``f(t) = t**(1/3)`` for
       ``t > (6/29)**3``, else ``t / (3 (6/29)**2) + 4/29``.

    Examples
    --------
    >>> round(float(cie_lightness(0.18)), 2)      # middle grey
    49.5
    >>> float(cie_lightness(1.0)), float(cie_lightness(0.0))
    (100.0, 0.0)
    """
    t = np.clip(np.asarray(y, dtype=np.float64), 0.0, None)
    f = np.where(t > _EPS_LAB, np.cbrt(t), t * _KAPPA_LAB + 4.0 / 29.0)
    return 116.0 * f - 16.0


@dataclass(frozen=True)
class ToneLikeness:
    """How well a drawing's tone, seen from a distance, matches a picture's.

    Attributes
    ----------
    range_ratio : float
        Tonal range (95th minus 5th percentile of L*) of the drawing over
        that of the picture; 1 = the same range.
    delta_lightness : float
        Mean L* of the drawing minus mean L* of the picture (negative: the
        drawing is darker).
    ssim : float
        Mean SSIM of the two L* images (dynamic range 100).
    tone_error : float
        Mean absolute difference of the two blurred linear reflectances.
    drawn_range, target_range : float
        The two tonal ranges, L* units.
    drawn_lightness, target_lightness : float
        The two mean L*.
    blur_px : float
        Gaussian sigma of the blur, pixels of the comparison grid.
    shape : tuple of int
        ``(H, W)`` of the comparison grid.
    """

    range_ratio: float
    delta_lightness: float
    ssim: float
    tone_error: float
    drawn_range: float
    target_range: float
    drawn_lightness: float
    target_lightness: float
    blur_px: float
    shape: tuple

    def meets(self, targets=None):
        """Whether every figure meets ``targets`` (default `TONE_TARGETS`)."""
        t = TONE_TARGETS if targets is None else targets
        return bool(self.range_ratio >= t["range_ratio"]
                    and abs(self.delta_lightness) <= t["delta_lightness"]
                    and self.ssim >= t["ssim"])

    def as_dict(self, digits=4):
        """The figures as plain floats rounded to ``digits`` decimals."""
        r = lambda v: round(float(v), digits)  # noqa: E731
        return {"ssim": r(self.ssim), "tone_error": r(self.tone_error),
                "tone_range_ratio": r(self.range_ratio),
                "lightness_diff": r(self.delta_lightness),
                "drawn_lightness": r(self.drawn_lightness),
                "picture_lightness": r(self.target_lightness)}


def tone_likeness_images(drawn_reflectance, target_reflectance, blur_px):
    """Compare the tone of a drawing and a picture, both blurred, in CIE L*.

    Both images are blurred alike with a Gaussian of sigma ``blur_px`` in
    linear light (where ink and paper mix, Murray-Davies), turned into CIE
    1976 lightness (`cie_lightness`), and compared by their tonal ranges
    (95th minus 5th percentile), their mean lightness and SSIM [1]_ (the
    paper's constants, Gaussian window sigma 1.5, dynamic range 100) as
    :func:`skimage.metrics.structural_similarity` computes it.

    Parameters
    ----------
    drawn_reflectance, target_reflectance : array_like, shape (H, W)
        Linear reflectance in [0, 1]; for a drawing ``1 - coverage``.
    blur_px : float
        Gaussian sigma, pixels.

    Returns
    -------
    ToneLikeness

    Raises
    ------
    InkreachError
        When the images differ in shape or are smaller than 11 x 11.

    References
    ----------
    .. [1] Z. Wang, A. C. Bovik, H. R. Sheikh and E. P. Simoncelli, "Image
       quality assessment: from error visibility to structural similarity",
       IEEE Transactions on Image Processing 13(4), 600-612, 2004.
    .. [2] CIE 15:2004, *Colorimetry*, section 8.2.1.

    Examples
    --------
    >>> import numpy as np
    >>> y = np.linspace(0.05, 0.9, 64 * 64).reshape(64, 64)
    >>> t = tone_likeness_images(y, y, 2.0)
    >>> t.range_ratio, t.delta_lightness, t.ssim
    (1.0, 0.0, 1.0)
    """
    from skimage.metrics import structural_similarity

    a = np.asarray(drawn_reflectance, dtype=np.float32)
    b = np.asarray(target_reflectance, dtype=np.float32)
    if a.shape != b.shape or a.ndim != 2:
        raise InkreachError(f"cannot compare a {a.shape} drawing with a {b.shape} picture; "
                            "give two 2-D images of the same shape")
    if min(a.shape) < _SSIM_WIN:
        raise InkreachError(f"a {a.shape} image is too small to compare tone; give at least "
                            f"{_SSIM_WIN}x{_SSIM_WIN}")
    blur = max(float(blur_px), 0.0)
    ya = np.clip(_blur(a, blur), 0.0, 1.0).astype(np.float64)
    yb = np.clip(_blur(b, blur), 0.0, 1.0).astype(np.float64)
    la, lb = cie_lightness(ya), cie_lightness(yb)
    pa = np.percentile(la, [5.0, 95.0])
    pb = np.percentile(lb, [5.0, 95.0])
    ra, rb = float(pa[1] - pa[0]), float(pb[1] - pb[0])
    s = structural_similarity(la, lb, data_range=100.0, gaussian_weights=True,
                              sigma=_SSIM_SIGMA, use_sample_covariance=False)
    ratio = ra / rb if rb > 1e-9 else (1.0 if ra <= 1e-9 else float("inf"))
    ma, mb = float(la.mean()), float(lb.mean())
    return ToneLikeness(range_ratio=float(ratio), delta_lightness=ma - mb, ssim=float(s),
                        tone_error=float(np.mean(np.abs(ya - yb))),
                        drawn_range=ra, target_range=rb, drawn_lightness=ma,
                        target_lightness=mb, blur_px=blur, shape=tuple(a.shape))


def tone_likeness(plan_or_parts, image, *, blur_mm=TONE_BLUR_MM, max_side=WORK_SIDE):
    """Tone likeness of the arm's drawing to the picture, seen from a distance.

    The strokes are rendered as the arm draws them (forward kinematics of
    the stream, the pen's true width, exact area coverage in linear light,
    see :func:`inkreach.trace.render_strokes`) on the picture's grid, then
    compared with the picture by `tone_likeness_images` after a Gaussian
    blur of ``blur_mm`` on paper.

    Parameters
    ----------
    plan_or_parts : Plan or tuple
        A plan, or a ``(stream, arm, placement)`` triple.
    image : str, os.PathLike, PIL.Image.Image or ndarray
        The picture the plan was made from.
    blur_mm : float, optional
        Gaussian sigma, mm on paper.
    max_side : int, optional
        Long side of the comparison grid, pixels.

    Returns
    -------
    ToneLikeness

    References
    ----------
    .. [1] A. Murray, "Monochrome reproduction in photoengraving", Journal of
       the Franklin Institute 221(6), 721-744, 1936.
    .. [2] Z. Wang et al., IEEE Transactions on Image Processing 13(4), 2004.
    """
    cov, pic, mm_per_px, _ = _drawn_on_picture(plan_or_parts, image, max_side)
    return tone_likeness_images(1.0 - cov, pic.luminance, float(blur_mm) / mm_per_px)


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
        For a tone style the figures of `tone_likeness`
        (`ToneLikeness.as_dict`: ``ssim`` and ``tone_error`` of the L*
        comparison at a 1.5 mm blur, ``tone_range_ratio``,
        ``lightness_diff``, ``drawn_lightness``, ``picture_lightness``); for
        a style that renders lines, the line likeness (see
        :mod:`inkreach.likeness.lines`). Rounded to 4 decimals.
    """
    from ..trace import style_renders
    if style_renders(plan.style) == "lines":
        from .lines import plan_line_likeness
        return plan_line_likeness(plan, image)
    if style_renders(plan.style) == "tone":
        return tone_likeness(plan, image).as_dict(4)
    return fidelity(plan, image).as_dict(4)
