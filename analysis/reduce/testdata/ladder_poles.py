#!/usr/bin/python3
"""Confirms the closed form of the uniform RC ladder's poles used by
ladder_test.go (recalled from memory):

    p_j = -(4/RC) * sin^2((2j-1)*pi / (2*(2K+1))),  j = 1..K,

for K sections of series R and shunt C, driven by a voltage source at the
input and open at the far end. The node equations with the source node
held at 0 V are C*dv/dt = -(1/R)*T*v, T tridiagonal (2 on the diagonal
except 1 in the last place, -1 off it); the poles are the generalised
eigenvalues of (-(1/R)*T, C*I), computed here with scipy.linalg.eig
(Debian's python3-scipy; run with /usr/bin/python3). Prints the largest
relative difference for a few K; no golden file is needed because the
Go test compares with the closed form itself.
"""
import numpy as np
import scipy.linalg

R, C = 1e3, 10e-9
for K in (3, 50, 400):
    T = 2 * np.eye(K) - np.eye(K, k=1) - np.eye(K, k=-1)
    T[-1, -1] = 1
    ev = scipy.linalg.eig(-T / R, C * np.eye(K), right=False)
    ev = np.sort(ev.real)[::-1]
    j = np.arange(1, K + 1)
    closed = -(4 / (R * C)) * np.sin((2 * j - 1) * np.pi / (2 * (2 * K + 1))) ** 2
    print(f"K={K}: max relative difference {np.max(np.abs(ev - closed) / np.abs(closed)):.2e}")
