"""Least-squares fit of an arm's geometry and motor angle corrections to measured dots."""

from dataclasses import dataclass, field

import numpy as np
from scipy import linalg
from scipy.optimize import least_squares

from ..errors import InkreachError
from . import _model

__all__ = ["CalibrationFit", "fit_arm"]

# Standard errors beyond these are "absurd" for a desk-top arm: the
# measurements do not pin the parameter down (common practice: a fitted value
# less certain than the error it is meant to correct is not worth keeping).
_ABSURD = {"motors": 5.0, "lengths": 5.0, "pen_extension": 5.0,
           "offsets": np.deg2rad(5.0), "scales": 0.05}
_BAD_RESIDUAL = 1e3  # mm, stands in for a dot where the loop cannot close


@dataclass(frozen=True, eq=False)
class CalibrationFit:
    """The result of :func:`fit_arm`.

    Attributes
    ----------
    arm : FiveBar or SerialArm
        The corrected arm: fitted geometry, and the motor angle correction
        in ``arm.hardware["calibration"] = {"offset_deg": [a, b],
        "scale": [a, b]}`` (true angle = scale * commanded + offset).
    params : dict
        Every model parameter's final value, fitted or fixed. Lengths and
        positions in mm, offsets in degrees (``offset1_deg``,
        ``offset2_deg``), scales as plain numbers.
    stderr : dict
        Standard error of each fitted parameter, same units as ``params``.
    fixed : tuple of str
        Parameters held at their starting values: not asked for, or not
        determined by the measurements (see ``warnings``).
    offset_deg, scale : tuple of float
        The motor angle correction, also in ``arm.hardware``.
    rms_before, rms_after : float
        Root mean square distance between measured and predicted dots
        before and after the fit, mm.
    residuals_before, residuals_after : ndarray, shape (n,)
        Distance of each dot from its prediction, mm.
    max_before, max_after : float
        Largest of those distances, mm.
    warnings : list of str
        What the measurements could not determine, and anything suspicious.
    n_points, dof : int
        Number of dots, and residual degrees of freedom ``2 n - p``.
    sigma : float
        Noise level per coordinate: the one given, or the one estimated
        from the residuals, mm.
    """

    arm: object
    params: dict
    stderr: dict
    fixed: tuple
    rms_before: float
    rms_after: float
    residuals_before: np.ndarray
    residuals_after: np.ndarray
    warnings: list = field(default_factory=list)
    n_points: int = 0
    dof: int = 0
    sigma: float = float("nan")

    @property
    def offset_deg(self):
        """Motor angle offsets, degrees (as in ``arm.hardware["calibration"]``)."""
        return tuple(self.arm.hardware["calibration"]["offset_deg"])

    @property
    def scale(self):
        """Motor angle scales (as in ``arm.hardware["calibration"]``)."""
        return tuple(self.arm.hardware["calibration"]["scale"])

    @property
    def max_before(self):
        """Largest dot error before the fit, mm."""
        return float(np.max(self.residuals_before))

    @property
    def max_after(self):
        """Largest dot error after the fit, mm."""
        return float(np.max(self.residuals_after))


def fit_arm(arm, q, xy, *, fit=("lengths", "motors", "pen_extension", "offsets", "scales"),
            sigma=None, rcond=1e-8):
    """Fit an arm's geometry and motor angle corrections to measured dots.

    The arm was commanded to the angles ``q`` and drew dots that were
    measured at ``xy`` on the calibration sheet. The model is that each
    motor really turns to ``scale_i * q_i + offset_i`` and the pen lands at
    the forward kinematics of the true geometry (link lengths, motor
    positions, pen extension). The parameters in the chosen groups are
    found by nonlinear least squares on the dot coordinates (trust-region
    reflective, lengths and scales kept positive, the pen extension kept
    at or above zero).

    Gauge (which frame the numbers are in): the measured coordinates
    *define* the arm frame; they are read off the printed sheet's axes, so
    no pose of the sheet is estimated. With the frame fixed that way the
    motor positions and the angle offsets are all determined by the dots:
    a rigid motion of the whole arm would move every dot, so it is not a
    free direction of the problem. (Estimating a sheet pose as well would
    add three parameters, a rigid motion, that trade exactly against the
    motor positions and offsets; this fit never does that.) The corrected
    arm therefore draws in the sheet's frame, wherever the sheet was laid.

    Degenerate data are reported, not fitted silently:

    * fewer coordinates than parameters + 2: :class:`InkreachError`;
    * dots at nearly one point or on nearly one line: a warning;
    * parameters the dots cannot separate: a column-pivoted QR of the
      column-normalised Jacobian at the start finds those whose relative
      pivot is below ``rcond``; they are held fixed (only the determined
      subspace is fitted) and named in a warning. After the fit any
      parameter whose standard error is absurd for a desk-top arm (above
      5 mm, 5 degrees or 0.05 in scale) is fixed in turn and the fit
      repeated, again with a warning.

    Parameters
    ----------
    arm : FiveBar or SerialArm
        The nominal arm; its values are the starting point, and the
        parameters not fitted keep them. An angle correction already in
        ``arm.hardware["calibration"]`` is the starting correction.
    q : array_like, shape (n, 2)
        Commanded joint angles, radians.
    xy : array_like, shape (n, 2)
        Measured dot positions in the arm (sheet) frame, mm.
    fit : sequence of str
        Parameter groups to fit: ``"lengths"`` (the link lengths),
        ``"motors"`` (motor axis positions), ``"pen_extension"`` (five-bar
        only; ignored for a serial arm), ``"offsets"`` and ``"scales"`` (the
        two motors' angle correction).
    sigma : float or array_like of shape (n,), optional
        Measurement standard deviation per coordinate, mm. Given, it
        weights the dots and sets the covariance scale; by default the
        dots are weighted equally and the noise is estimated from the
        residuals.
    rcond : float
        Relative pivot below which a parameter counts as undetermined.

    Returns
    -------
    CalibrationFit

    Raises
    ------
    InkreachError
        For mismatched or non-finite input, an unknown group, or too few
        dots for the parameters asked for.

    Notes
    -----
    The covariance is the Gauss-Newton one, ``cov = s^2 (J^T J)^-1`` with
    ``J`` the Jacobian of the (weighted) residuals at the solution, taken
    by central differences, and ``s^2 = RSS / (m - p)`` (``m`` residuals,
    ``p`` fitted parameters), or ``s = 1`` on the weighted residuals when
    ``sigma`` is given. Under Gaussian noise ``(estimate - truth) /
    stderr`` then follows Student's t with ``m - p`` degrees of freedom, to
    first order.

    References
    ----------
    .. [1] J. Nocedal and S. J. Wright, *Numerical Optimization*, 2nd ed.,
       Springer, 2006, chapter 10 (nonlinear least squares, Gauss-Newton).
    .. [2] W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P.
       Flannery, *Numerical Recipes*, 3rd ed., Cambridge, 2007, section
       15.5 (the covariance of nonlinear least-squares estimates).
    .. [3] M. A. Branch, T. F. Coleman and Y. Li, "A subspace, interior, and
       conjugate gradient method for large-scale bound-constrained
       minimization problems", SIAM J. Sci. Comput. 21(1), 1999 (the
       trust-region reflective method of ``scipy.optimize.least_squares``).
    .. [4] G. H. Golub and C. F. Van Loan, *Matrix Computations*, 4th ed.,
       Johns Hopkins, 2013, section 5.4.2 (QR with column pivoting for
       rank-deficient least squares).
    .. [5] J. M. Hollerbach and C. W. Wampler, "The calibration index and
       taxonomy for robot kinematic calibration methods", Int. J. Robotics
       Research 15(6), 1996 (identifiability of kinematic parameters).

    Examples
    --------
    >>> import dataclasses
    >>> import numpy as np
    >>> from inkreach.arms import default_arm
    >>> from inkreach.calibrate import calibration_targets
    >>> arm = default_arm()
    >>> built = dataclasses.replace(arm, left_upper=101.0, right_lower=149.2)
    >>> q = calibration_targets(arm, n=12)
    >>> f = fit_arm(arm, q, built.fk(q), fit=("lengths",))
    >>> round(f.params["left_upper"], 6), round(f.params["right_lower"], 6)
    (101.0, 149.2)
    >>> f.rms_after < 1e-6 < f.rms_before
    True
    """
    q = _points(q, "commanded angles q")
    xy = _points(xy, "measured positions xy")
    if len(q) != len(xy):
        raise InkreachError(f"{len(q)} commanded angle pairs but {len(xy)} measured positions; "
                            "give one measured position per dot")
    n = len(q)
    if isinstance(fit, str):
        fit = (fit,)
    unknown = sorted(set(fit) - set(_model.GROUPS))
    if unknown:
        raise InkreachError(f"unknown calibration group {', '.join(unknown)}; use some of "
                            f"{', '.join(_model.GROUPS)}")
    w = _weights(sigma, n)
    names, groups = _model.param_spec(arm)
    v0 = _model.to_vector(arm)
    lo, hi = _model.bounds(arm)
    v0 = np.clip(v0, lo, hi)
    free = np.array([g in fit for g in groups])
    p_req = int(free.sum())
    m = 2 * n
    if p_req == 0:
        raise InkreachError("no parameter to fit; choose groups from "
                            f"{', '.join(_model.GROUPS)}")
    if m < p_req + 2:
        need = (p_req + 3) // 2
        raise InkreachError(f"{n} dots give {m} numbers, too few to fit {p_req} parameters "
                            f"(at least {p_req + 2} needed); measure at least {need} dots "
                            "or fit fewer groups")

    warnings = _spread_warnings(xy)

    def residual(v):
        r = (_model.predict(arm, v, q) - xy) * w[:, None]
        r = r.ravel()
        return np.where(np.isfinite(r), r, _BAD_RESIDUAL)

    d_before = _distances(_model.predict(arm, v0, q), xy)

    # structurally undetermined parameters: rank-revealing QR at the start
    J0 = _jacobian(residual, v0, np.flatnonzero(free))
    drop = _undetermined(J0, rcond)
    idx = np.flatnonzero(free)
    if len(drop):
        bad = [names[idx[k]] for k in drop]
        warnings.append(f"the dots do not determine {', '.join(_label(b) for b in bad)}; "
                        "held at the starting value (spread the dots more widely)")
        free[idx[drop]] = False

    while True:
        v, cov, s2, dof, at_bound = _solve(residual, v0, free, lo, hi, sigma is not None, m)
        idx = np.flatnonzero(free)
        se = np.sqrt(np.maximum(np.diag(cov), 0.0))
        limit = np.array([_ABSURD[groups[i]] for i in idx])
        ratio = np.where(np.isfinite(se), se / limit, np.inf)
        k = int(np.argmax(ratio)) if len(ratio) else 0
        if len(ratio) and ratio[k] > 1.0 and len(idx) > 1:
            warnings.append(f"{_label(names[idx[k]])} is poorly determined by these dots "
                            f"(standard error {_fmt_val(names[idx[k]], se[k])}); "
                            "held at the starting value")
            free[idx[k]] = False
            continue
        break

    for i in idx[at_bound]:
        warnings.append(f"{_label(names[i])} ended at its bound ({_fmt_val(names[i], v[i])}); "
                        "its standard error is not reliable")
    d_after = _distances(_model.predict(arm, v, q), xy)
    rms_after = float(np.sqrt(np.mean(d_after ** 2)))
    if rms_after > 1.0:
        warnings.append(f"dots still miss by {rms_after:.2f} mm rms after the fit; check the "
                        "dot numbers and the measurements, or the sheet's print scale")

    params = {_label(nm): _display(nm, val) for nm, val in zip(names, v)}
    stderr = {_label(names[i]): _display(names[i], s) for i, s in zip(idx, se)}
    fixed = tuple(_label(nm) for nm, f in zip(names, free) if not f)
    return CalibrationFit(
        arm=_model.corrected_arm(arm, v), params=params, stderr=stderr, fixed=fixed,
        rms_before=float(np.sqrt(np.mean(d_before ** 2))), rms_after=rms_after,
        residuals_before=d_before, residuals_after=d_after,
        warnings=warnings, n_points=n, dof=int(dof),
        sigma=float(np.sqrt(s2)) if sigma is None else float(np.mean(1.0 / w)))


def _solve(residual, v0, free, lo, hi, known_sigma, m):
    """Least squares over the free parameters; covariance at the solution."""
    idx = np.flatnonzero(free)

    def fun(x):
        v = v0.copy()
        v[idx] = x
        return residual(v)

    x0 = v0[idx]
    res = least_squares(fun, x0, bounds=(lo[idx], hi[idx]), method="trf", x_scale="jac",
                        xtol=1e-12, ftol=1e-12, gtol=1e-12, max_nfev=200 * (len(idx) + 1))
    v = v0.copy()
    v[idx] = res.x
    J = _jacobian(residual, v, idx)
    r = residual(v)
    dof = m - len(idx)
    s2 = 1.0 if known_sigma else float(r @ r) / dof
    # (J^T J)^-1 through the SVD, so a near-singular J gives large, not wrong, numbers
    _, sv, Vt = linalg.svd(J, full_matrices=False)
    with np.errstate(divide="ignore"):
        inv = np.where(sv > sv[0] * 1e-14, 1.0 / sv ** 2, np.inf)
    cov = s2 * (Vt.T * inv) @ Vt
    span = np.maximum(np.abs(res.x), 1.0) * 1e-9
    at_bound = (np.abs(res.x - lo[idx]) <= span) | (np.abs(res.x - hi[idx]) <= span)
    return v, cov, s2, dof, at_bound


def _jacobian(residual, v, idx):
    """Central-difference Jacobian of ``residual`` in the parameters ``idx``."""
    cols = []
    for i in idx:
        h = 1e-6 * max(1.0, abs(v[i]))
        e = np.zeros_like(v)
        e[i] = h
        cols.append((residual(v + e) - residual(v - e)) / (2 * h))
    return np.stack(cols, axis=1) if cols else np.zeros((len(residual(v)), 0))


def _undetermined(J, rcond):
    """Columns of ``J`` (local indices) beyond its numerical rank."""
    norms = np.linalg.norm(J, axis=0)
    zero = norms <= 1e-12 * max(norms.max(initial=0.0), 1e-300)
    Jn = J / np.where(zero, 1.0, norms)
    Jn[:, zero] = 0.0
    _, R, piv = linalg.qr(Jn, mode="economic", pivoting=True)
    d = np.abs(np.diag(R))
    if len(d) < J.shape[1]:
        d = np.concatenate([d, np.zeros(J.shape[1] - len(d))])
    lead = d[0] if len(d) and d[0] > 0 else 1.0
    return np.sort(piv[d < rcond * lead])


def _spread_warnings(xy):
    """Warnings when the measured dots lie at one point or along one line."""
    c = xy - xy.mean(axis=0)
    sv = np.linalg.svd(c / np.sqrt(len(xy)), compute_uv=False)
    major = sv[0]
    minor = sv[1] if len(sv) > 1 else 0.0
    if major < 1.0:
        return [f"all dots lie within about {major:.2f} mm of one point; they cannot tell "
                "the geometry apart: use dots spread over the drawing area"]
    if minor < max(1.0, 0.05 * major):
        return [f"the dots lie nearly on one line (rms spread {minor:.2f} mm across it, "
                f"{major:.1f} mm along it); the fit is poorly determined: spread them over an area"]
    return []


def _points(a, what):
    try:
        a = np.asarray(a, dtype=float)
    except (TypeError, ValueError):
        raise InkreachError(f"{what} must be numbers in n rows of 2") from None
    if a.ndim != 2 or a.shape[1] != 2:
        raise InkreachError(f"{what} must have shape (n, 2), got {a.shape}")
    if not np.all(np.isfinite(a)):
        raise InkreachError(f"{what} hold a non-finite number; remove or fix that dot")
    return a


def _weights(sigma, n):
    if sigma is None:
        return np.ones(n)
    s = np.broadcast_to(np.asarray(sigma, dtype=float), (n,)).copy()
    if not np.all(np.isfinite(s) & (s > 0)):
        raise InkreachError("sigma must be a positive measurement error in mm")
    return 1.0 / s


def _distances(pred, xy):
    d = np.hypot(*(pred - xy).T)
    return np.where(np.isfinite(d), d, np.inf)


def _label(name):
    return name + "_deg" if name.startswith("offset") else name


def _display(name, value):
    return float(np.rad2deg(value)) if name.startswith("offset") else float(value)


def _fmt_val(name, value):
    if name.startswith("offset"):
        return f"{np.rad2deg(value):.3f} deg"
    if name.startswith("scale"):
        return f"{value:.5f}"
    return f"{value:.3f} mm"
