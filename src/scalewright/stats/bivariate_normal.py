"""The standard bivariate normal distribution, vectorised: the cell probabilities of polychoric correlations.

Hand-written because scipy's ``multivariate_normal.cdf`` evaluates one point at a time by quasi-Monte
Carlo (milliseconds each, and a few digits), while a 60-item polychoric matrix needs tens of thousands of
points per iteration to full precision. scipy's Owen's T function (``scipy.special.owens_t``) does the
hard part near |rho| = 1.
"""
from __future__ import annotations

import math
from functools import cache

import numpy as np
from scipy.special import ndtr, owens_t

#: below this |rho| the arcsine quadrature is accurate to double precision with 20 nodes (Drezner &
#: Wesolowsky 1990; Genz 2004 use the same split); above it Owen's T function takes over
QUADRATURE_LIMIT = 0.925
_NODES = 20


@cache
def _legendre() -> tuple[np.ndarray, np.ndarray]:
    return np.polynomial.legendre.leggauss(_NODES)


def _by_quadrature(h: np.ndarray, k: np.ndarray, rho: np.ndarray) -> np.ndarray:
    nodes, weights = _legendre()
    angle_max = np.arcsin(rho)[..., None]
    sine = np.sin(angle_max * (nodes + 1.0) / 2.0)
    hh, kk = h[..., None], k[..., None]
    exponent = -(hh * hh + kk * kk - 2.0 * hh * kk * sine) / (2.0 * (1.0 - sine * sine))
    integral = (angle_max[..., 0] / 2.0) * (np.exp(exponent) @ weights)
    return ndtr(h) * ndtr(k) + integral / (2.0 * math.pi)


def _by_owens_t(h: np.ndarray, k: np.ndarray, rho: np.ndarray) -> np.ndarray:
    root = np.sqrt((1.0 - rho) * (1.0 + rho))
    with np.errstate(divide="ignore", invalid="ignore"):
        t_h = np.where(h == 0.0, np.sign(k) / 4.0, owens_t(h, (k - rho * h) / (h * root)))
        t_k = np.where(k == 0.0, np.sign(h) / 4.0, owens_t(k, (h - rho * k) / (k * root)))
    beta = np.where((h * k < 0.0) | ((h * k == 0.0) & (h + k < 0.0)), 0.5, 0.0)
    value = 0.5 * ndtr(h) + 0.5 * ndtr(k) - t_h - t_k - beta
    both_zero = (h == 0.0) & (k == 0.0)
    return np.where(both_zero, 0.25 + np.arcsin(rho) / (2.0 * math.pi), value)


def bivariate_normal_cdf(h: np.ndarray, k: np.ndarray, rho: np.ndarray) -> np.ndarray:
    r"""P(X <= h, Y <= k) for standard normal X, Y with correlation rho, elementwise (broadcast).

    .. math::

        \Phi_2(h, k; \rho) = \Phi(h)\Phi(k) + \frac{1}{2\pi}\int_0^{\arcsin\rho}
            \exp\!\left(-\frac{h^2 + k^2 - 2hk\sin\theta}{2\cos^2\theta}\right) d\theta

    (Sheppard's formula differentiated in rho, Plackett 1954), by 20-point Gauss-Legendre quadrature for
    :math:`|\rho| \le 0.925`; above, Owen's (1956) identity
    :math:`\Phi_2 = \tfrac12\Phi(h) + \tfrac12\Phi(k) - T(h, a_h) - T(k, a_k) - \beta` with
    :math:`a_h = (k - \rho h)/(h\sqrt{1-\rho^2})` and :math:`\beta = \tfrac12` when h and k lie on
    opposite sides of 0. Infinite h or k give the univariate limits; |rho| = 1 the degenerate limits.

    References
    ----------
    .. [1] Drezner, Z., & Wesolowsky, G. O. (1990). On the computation of the bivariate normal integral.
       Journal of Statistical Computation and Simulation, 35, 101-107.
    .. [2] Owen, D. B. (1956). Tables for computing bivariate normal probabilities. Annals of
       Mathematical Statistics, 27, 1075-1090.
    """
    h, k, rho = np.broadcast_arrays(np.asarray(h, dtype=float), np.asarray(k, dtype=float),
                                    np.asarray(rho, dtype=float))
    out = np.empty(h.shape)
    finite = np.isfinite(h) & np.isfinite(k)
    # limits: a bound at -inf gives 0, at +inf the other variable's distribution
    out[~finite] = np.where((h == -np.inf) | (k == -np.inf), 0.0,
                            np.where(h == np.inf, ndtr(k), ndtr(h)))[~finite]
    upper = finite & (rho >= 1.0)
    lower = finite & (rho <= -1.0)
    out[upper] = ndtr(np.minimum(h, k))[upper]
    out[lower] = np.maximum(ndtr(h) + ndtr(k) - 1.0, 0.0)[lower]
    inner = finite & ~upper & ~lower
    near = inner & (np.abs(rho) <= QUADRATURE_LIMIT)
    far = inner & ~near
    if near.any():
        out[near] = _by_quadrature(h[near], k[near], rho[near])
    if far.any():
        out[far] = _by_owens_t(h[far], k[far], rho[far])
    return out


def bivariate_normal_pdf(h: np.ndarray, k: np.ndarray, rho: np.ndarray) -> np.ndarray:
    r"""Density of the standard bivariate normal, :math:`\partial \Phi_2 / \partial \rho` (Plackett 1954).

    .. math:: \phi_2(h, k; \rho) = \frac{1}{2\pi\sqrt{1-\rho^2}}
              \exp\!\left(-\frac{h^2 - 2\rho hk + k^2}{2(1-\rho^2)}\right)

    0 where h or k is infinite.
    """
    h, k, rho = (np.asarray(v, dtype=float) for v in (h, k, rho))
    one_minus = (1.0 - rho) * (1.0 + rho)
    with np.errstate(invalid="ignore", over="ignore"):
        quadratic = np.where(np.isfinite(h) & np.isfinite(k), h * h - 2.0 * rho * h * k + k * k, np.inf)
        return np.exp(-quadratic / (2.0 * one_minus)) / (2.0 * math.pi * np.sqrt(one_minus))


def bivariate_normal_cdf_dh(h: np.ndarray, k: np.ndarray, rho: np.ndarray) -> np.ndarray:
    r""":math:`\partial \Phi_2(h, k; \rho) / \partial h = \phi(h)\,\Phi\big((k - \rho h)/\sqrt{1-\rho^2}\big)`,
    0 at an infinite h; :math:`\phi(h)` at k = +inf, 0 at k = -inf."""
    h, k, rho = (np.asarray(v, dtype=float) for v in (h, k, rho))
    with np.errstate(invalid="ignore"):
        density = np.where(np.isfinite(h), np.exp(-0.5 * np.where(np.isfinite(h), h, 0.0) ** 2) / math.sqrt(2 * math.pi),
                           0.0)
        inner = np.where(np.isfinite(k), (k - rho * np.where(np.isfinite(h), h, 0.0)) /
                         np.sqrt((1.0 - rho) * (1.0 + rho)), k)
    return density * ndtr(inner)


def bivariate_normal_cdf_grid(x: np.ndarray, y: np.ndarray, rho: np.ndarray) -> np.ndarray:
    """:func:`bivariate_normal_cdf` on the grid of each row of ``x`` (P, I) by each row of ``y`` (P, J),
    with one rho per row (P,): result (P, I, J).

    The same quadrature, organised for many grid points per rho: the nodes' sines depend on rho only,
    so each point costs one exponential per node.
    """
    x, y, rho = (np.asarray(v, dtype=float) for v in (x, y, rho))
    out = np.empty((x.shape[0], x.shape[1], y.shape[1]))
    near = np.abs(rho) <= QUADRATURE_LIMIT
    if near.any():
        xs = np.where(np.isfinite(x[near]), x[near], 0.0)
        ys = np.where(np.isfinite(y[near]), y[near], 0.0)
        nodes, weights = _legendre()
        angle_max = np.arcsin(rho[near])
        sine = np.sin(angle_max[:, None] * (nodes + 1.0) / 2.0)              # (P', nodes)
        cos2 = 1.0 - sine * sine
        sum_squares = (xs * xs)[:, :, None] + (ys * ys)[:, None, :]            # (P', I, J)
        product = xs[:, :, None] * ys[:, None, :]
        exponent = sum_squares[..., None] * (-0.5 / cos2)[:, None, None, :]
        exponent += product[..., None] * (sine / cos2)[:, None, None, :]
        integral = (np.exp(exponent, out=exponent) @ weights) * (angle_max / 2.0)[:, None, None]
        out[near] = ndtr(xs)[:, :, None] * ndtr(ys)[:, None, :] + integral / (2.0 * math.pi)
    if (~near).any():
        out[~near] = bivariate_normal_cdf(x[~near][:, :, None], y[~near][:, None, :], rho[~near][:, None, None])
    # infinite bounds: the quadrature above ran on 0 there; put in the limits
    xx, yy = np.broadcast_arrays(x[:, :, None], y[:, None, :])
    limits = ~(np.isfinite(xx) & np.isfinite(yy))
    if limits.any():
        out[limits] = bivariate_normal_cdf(xx[limits], yy[limits], np.broadcast_to(rho[:, None, None], xx.shape)[limits])
    return out
