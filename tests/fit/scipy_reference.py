"""Reference fit for tests/fit/scipy_test.cpp: the same periodic Goman-Khrabrov
loop (quasi-steady attached flow, tanh static separation, Kirchhoff with alpha)
fitted with scipy.optimize.least_squares (trust-region reflective, bounds).

usage: scipy_reference.py LOOP.csv steepness_per_rad alpha_star_rad cn_alpha alpha0_rad period_conv
LOOP.csv: t_conv,alpha_rad,alpha_rate,cn,in_window. Prints "tau1 tau2".
"""
import sys

import numpy as np
from scipy.optimize import least_squares

data = np.loadtxt(sys.argv[1], delimiter=",", skiprows=1)
steep, star, cn_alpha, alpha0, period = map(float, sys.argv[2:7])
t, alpha, rate, cn, window = data.T
window = window > 0.5


def x0(a):
    return 0.5 * (1.0 - np.tanh(steep * (a - star)))


def integrate(tc, u, tau1, x_start):
    x = np.empty_like(u)
    x[0] = x_start
    for i in range(1, len(u)):
        r = (tc[i] - tc[i - 1]) / tau1
        decay = -np.expm1(-r)
        x[i] = (1 - decay) * x[i - 1] + decay * u[i - 1] + (u[i] - u[i - 1]) * (1 - decay / r)
    return x


def model(p):
    tau1, tau2 = p
    tc = np.append(t, t[0] + period)
    u = x0(np.append(alpha, alpha[0]) - tau2 * np.append(rate, rate[0]))
    if tau1 == 0:
        x = u[:-1]
    else:
        free = integrate(tc, u, tau1, 0.0)[-1]
        x = integrate(tc, u, tau1, free / -np.expm1(-period / tau1))[:-1]
    return cn_alpha * (0.5 * (1 + np.sqrt(np.clip(x, 0, 1)))) ** 2 * (alpha - alpha0)


fit = least_squares(lambda p: (model(p) - cn)[window], x0=[1.0, 1.0], bounds=([0, 0], [20, 20]),
                    method="trf", xtol=1e-12, ftol=1e-12, gtol=1e-12)
print(f"{fit.x[0]:.10f} {fit.x[1]:.10f}")
