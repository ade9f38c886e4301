"""The benchmark bridge supply (disc::reference::bridgeSupply) written independently for SciPy.

States: junction voltages u1..u4 of the diodes (behind their series resistances), transformer
winding currents i1, i2 and the output voltage. The bridge input nodes follow from Kirchhoff's
current law at each instant. Values repeat libdisc/include/disc/reference_circuits.hpp and the
DiodeParams defaults; the diode laws are those of docs/engine.md (Shockley with emission
coefficient, 1 pS shunt, exponential breakdown, depletion capacitance linearised above fc*vj).
"""
import numpy as np

K_B, Q_E = 1.380649e-23, 1.602176634e-19
V_RMS, FREQ, R_MAINS = 230.0, 50.0, 0.5
RATIO, R1, R2, LL1, LL2, LM = 230.0 / 15.0, 4.0, 0.1, 20e-3, 1e-4, 20.0
C_RES, R_LOAD = 2200e-6, 18.0
IS, N, RS, CJ0, VJ, M, FC, BV, IBV = 2.5e-9, 1.75, 0.04, 20e-12, 0.7, 0.4, 0.5, 1000.0, 1e-6
EG, XTI, TNOM, T = 1.11, 3.0, 300.15, 298.15

NVT = N * K_B * T / Q_E
IS_T = IS * (T / TNOM) ** (XTI / N) * np.exp((T / TNOM - 1.0) * EG / NVT)
L1 = LL1 + LM
MUT = LM / RATIO
L2 = LL2 + LM / RATIO**2
L_INV = np.linalg.inv(np.array([[L1, MUT], [MUT, L2]]))
F2 = (1 - FC) ** (1 + M)
F3 = 1 - FC * (1 + M)


def junction_current(u):
    return IS_T * (np.exp(u / NVT) - 1.0) + 1e-12 * u - IBV * np.exp(-(u + BV) / NVT)


def junction_capacitance(u):
    return np.where(u < FC * VJ, CJ0 * np.power(np.maximum(1 - u / VJ, 1e-12), -M),
                    CJ0 / F2 * (F3 + M * u / VJ))


def rhs(t, y):
    u = y[0:4]
    i1, i2, vo = y[4], y[5], y[6]
    # KCL at the bridge inputs sa and sb (diodes D1 sa->out, D2 sb->out, D3 gnd->sa, D4 gnd->sb).
    vsa = (vo + u[0] - u[2] - RS * i2) / 2.0
    vsb = (vo + u[1] - u[3] + RS * i2) / 2.0
    anode = np.array([vsa, vsb, 0.0, 0.0])
    junction_node = np.array([vo + u[0], vo + u[1], vsa + u[2], vsb + u[3]])
    i_d = (anode - junction_node) / RS
    du = (i_d - junction_current(u)) / junction_capacitance(u)
    emf = np.sqrt(2.0) * V_RMS * np.sin(2 * np.pi * FREQ * t)
    di = L_INV @ np.array([emf - (R_MAINS + R1) * i1, (vsa - vsb) - R2 * i2])
    dvo = (i_d[0] + i_d[1] - vo / R_LOAD) / C_RES
    return np.concatenate([du, di, [dvo]])


def solve(stop=1.0, rtol=1e-3, atol=1e-6):
    from scipy.integrate import solve_ivp
    return solve_ivp(rhs, (0.0, stop), np.zeros(7), method="Radau", rtol=rtol, atol=atol,
                     max_step=1e-3, dense_output=True)


def output_figures(sol, stop, cycles=1):
    t = np.linspace(stop - cycles / FREQ, stop, 20001)
    vo = sol.sol(t)[6]
    return np.trapz(vo, t) / (t[-1] - t[0]), vo.max() - vo.min()
