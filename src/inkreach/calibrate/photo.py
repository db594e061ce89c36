"""Measure the dots from a flat-on photo of the calibration sheet."""

import numpy as np

from ..errors import InkreachError
from .sheet import _RING, sheet_corners

__all__ = ["measure_sheet_photo"]


def measure_sheet_photo(image, arm, targets, search_mm=10.0):
    """Dot positions in the arm frame, read from a photo of the dotted sheet.

    The four black corner markers are the largest dark, nearly square
    blobs; their centres fix the homography from photo pixels to the
    sheet's millimetres. Dark round blobs of dot size are found with
    OpenCV's ``SimpleBlobDetector``, mapped to millimetres, and each dot is
    matched to one blob near where the nominal model expects it (an
    optimal one-to-one assignment).

    The photo must be taken flat-on, with the sheet upright (the motors'
    edge at the bottom, turned by less than about 45 degrees), sharp
    enough to show a dot over several pixels.

    Parameters
    ----------
    image : ndarray or PIL.Image.Image
        The photo, grey or colour.
    arm : FiveBar or SerialArm
        The arm the sheet was made for (nominal model).
    targets : array_like, shape (n, 2)
        The commanded angles the sheet was made with, radians.
    search_mm : float
        How far from its expected position a dot may be, mm.

    Returns
    -------
    ndarray, shape (n, 2)
        Measured dot positions, mm, in the order of ``targets``.

    Raises
    ------
    InkreachError
        When the four corner markers or some dot cannot be found.

    References
    ----------
    .. [1] R. Hartley and A. Zisserman, *Multiple View Geometry in Computer
       Vision*, 2nd ed., Cambridge, 2004, section 4.1 (the homography of a
       plane from four point correspondences).
    .. [2] H. W. Kuhn, "The Hungarian method for the assignment problem",
       Naval Research Logistics Quarterly 2, 1955.
    """
    import cv2
    from scipy.optimize import linear_sum_assignment

    gray = _gray(image)
    q = np.asarray(targets, dtype=float).reshape(-1, 2)
    corners_px, ink = _find_markers(gray, cv2)
    corners_mm = sheet_corners(arm, q)
    H, _ = cv2.findHomography(corners_px, corners_mm)
    if H is None:
        raise InkreachError("the corner markers in the photo do not form a usable frame; "
                            "take the photo flat-on with all four corners in view")
    # pixels per mm, for the blob size limits
    Hi = np.linalg.inv(H)
    c_mm = corners_mm.mean(0)
    a, b = cv2.perspectiveTransform(np.array([[c_mm, c_mm + [1.0, 0.0]]]), Hi)[0]
    px_per_mm = float(np.hypot(*(b - a)))
    if px_per_mm < 3.0:
        raise InkreachError(f"the photo shows the sheet at {px_per_mm:.1f} pixels per mm; "
                            "take it closer or at a higher resolution (at least 3 per mm)")
    p = cv2.SimpleBlobDetector_Params()
    p.filterByColor, p.blobColor = True, 0
    p.filterByArea = True
    p.minArea = float(np.pi * (0.15 * px_per_mm) ** 2)
    p.maxArea = float(np.pi * (2.5 * px_per_mm) ** 2)
    p.filterByCircularity, p.minCircularity = True, 0.6
    p.filterByInertia, p.minInertiaRatio = True, 0.4
    p.filterByConvexity, p.minConvexity = True, 0.8
    p.minDistBetweenBlobs = 0.5 * px_per_mm
    # ink dots are near black; the printed rings and grid are grey: only
    # levels well below the paper count (our choice: a third of the way
    # from ink to paper, between the dots' black and the rings' grey)
    paper = float(np.median(gray))
    p.minThreshold = max(ink, 1.0)
    p.maxThreshold = max(ink + 0.35 * (paper - ink), p.minThreshold + 8.0)
    p.thresholdStep = max((p.maxThreshold - p.minThreshold) / 8.0, 1.0)
    keys = cv2.SimpleBlobDetector_create(p).detect(gray)
    if not keys:
        raise InkreachError("no dots found in the photo; check that the sheet was dotted "
                            "and the photo is sharp")
    blobs_px = np.array([k.pt for k in keys], dtype=np.float64)
    blobs = cv2.perspectiveTransform(blobs_px[None], H)[0]
    expected = arm.fk(q)
    # a dot is filled: its centre pixel is ink-dark
    r, c = np.clip(np.rint(blobs_px[:, 1]).astype(int), 0, gray.shape[0] - 1), \
        np.clip(np.rint(blobs_px[:, 0]).astype(int), 0, gray.shape[1] - 1)
    keep = gray[r, c] <= p.maxThreshold
    # and it is not part of a printed dot number
    keep &= ~_in_labels(blobs, expected)
    blobs = blobs[keep]
    if not len(blobs):
        raise InkreachError("no dots found in the photo; check that the sheet was dotted "
                            "and the photo is sharp")
    D = np.hypot(*(expected[:, None, :] - blobs[None, :, :]).transpose(2, 0, 1))
    D = np.where(D <= search_mm, D, 1e9)
    rows, cols = linear_sum_assignment(D)
    xy = np.full((len(q), 2), np.nan)
    ok = D[rows, cols] < 1e9
    xy[rows[ok]] = blobs[cols[ok]]
    missing = np.flatnonzero(~np.all(np.isfinite(xy), axis=1))
    if len(missing):
        which = ", ".join(str(i + 1) for i in missing)
        raise InkreachError(f"dot {which} not found within {search_mm:g} mm of where it was "
                            "expected; measure it by hand in the CSV")
    return xy


def _in_labels(points, expected):
    """True for points inside a printed dot number's box (see ``sheet_svg``)."""
    n = len(expected)
    width = np.array([len(str(i)) for i in range(1, n + 1)]) * 2.0  # mm, 3 mm font
    x0 = expected[:, 0] + _RING + 0.8 - 0.5
    x1 = x0 + width + 1.0
    y0 = expected[:, 1] + _RING - 0.5 - 0.8
    y1 = y0 + 3.0 + 1.3
    P = points[:, None, :]
    inside = (P[..., 0] >= x0) & (P[..., 0] <= x1) & (P[..., 1] >= y0) & (P[..., 1] <= y1)
    return inside.any(axis=1)


def _gray(image):
    a = np.asarray(image)
    if a.ndim == 3:
        a = a[..., :3].astype(np.float64) @ np.array([0.299, 0.587, 0.114])
    if a.dtype != np.uint8:
        a = np.asarray(a, dtype=np.float64)
        if a.max(initial=0) <= 1.0:
            a = a * 255.0
        a = np.clip(np.rint(a), 0, 255).astype(np.uint8)
    if a.ndim != 2 or min(a.shape) < 16:
        raise InkreachError("the photo must be a grey or colour picture of the sheet")
    return np.ascontiguousarray(a)


def _find_markers(gray, cv2):
    """Pixel centres of the corner markers (lower-left, lower-right, upper-right,
    upper-left) and the grey level of their ink."""
    _, bw = cv2.threshold(gray, 0, 255, cv2.THRESH_BINARY_INV + cv2.THRESH_OTSU)
    n, lab, st, cen = cv2.connectedComponentsWithStats(bw, connectivity=8)
    w, h, area = st[1:, cv2.CC_STAT_WIDTH], st[1:, cv2.CC_STAT_HEIGHT], st[1:, cv2.CC_STAT_AREA]
    fill = area / np.maximum(w * h, 1)
    aspect = w / np.maximum(h, 1)
    ok = (fill > 0.6) & (aspect > 0.5) & (aspect < 2.0) & (area >= 25)
    idx = np.flatnonzero(ok)
    if len(idx) < 4:
        raise InkreachError("the four black corner markers are not all visible in the photo; "
                            "photograph the whole sheet")
    idx = idx[np.argsort(area[idx])[::-1][:4]]
    if area[idx[3]] < 0.4 * area[idx[0]]:
        raise InkreachError("the four black corner markers are not all visible in the photo; "
                            "photograph the whole sheet")
    c = cen[1:][idx]  # (col, row)
    s, d = c[:, 0] + c[:, 1], c[:, 1] - c[:, 0]
    order = [int(np.argmax(d)), int(np.argmax(s)), int(np.argmin(d)), int(np.argmin(s))]
    if len(set(order)) != 4:
        raise InkreachError("the corner markers could not be told apart; take the photo "
                            "with the sheet upright (motors' edge at the bottom)")
    ink = float(np.median(gray[np.isin(lab, idx + 1)]))  # the markers' black
    return c[order].astype(np.float64), ink



