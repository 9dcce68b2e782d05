"""Least-squares pieces for the reference scripts, from numpy's QR factorisation X = QR
(Householder, LAPACK's dgeqrf) and scipy's triangular solves; X'X is never formed or inverted,
whose condition number is the square of X's (Golub and Van Loan, Matrix Computations, 4th ed.,
section 5.3)."""
import numpy as np
import scipy.linalg


def weights(design):
    """(X'X)^-1 X' = R^-1 Q': row j gives coefficient j as a weighted sum of the observations."""
    q, r = np.linalg.qr(design)
    return scipy.linalg.solve_triangular(r, q.T)


def bread(design):
    """(X'X)^-1 = R^-1 R^-T."""
    _, r = np.linalg.qr(design)
    r_inverse = scipy.linalg.solve_triangular(r, np.eye(r.shape[0]))
    return r_inverse @ r_inverse.T


def leverages(design):
    """The hat matrix's diagonal, h_i = x_i' (X'X)^-1 x_i = the squared norm of row i of Q."""
    q, _ = np.linalg.qr(design)
    return np.einsum("ij,ij->i", q, q)
