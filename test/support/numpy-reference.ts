/**
 * An independent numpy evaluation of docs/conventions.md's channel formula,
 * H_s[k] = sum_l rho_l exp(-j 2 pi f_k tau_l) r_rx(u_arr) r_tx(u_dep)^T, with the arrays,
 * orientations and directions rebuilt in numpy from the scenario file alone (explicit static
 * paths). Run as `python -c NUMPY_REFERENCE <scenario.json> <H.npy>`; prints the dtype, the
 * shape and the relative Frobenius error of each subframe as JSON.
 */
export const NUMPY_REFERENCE = String.raw`
import json, sys
import numpy as np
sc = json.load(open(sys.argv[1]))
H = np.load(sys.argv[2])
c = 299792458.0
lam = c / sc['carrierHz']; k0 = 2 * np.pi / lam
def rot(o):
    y, p, r = (np.deg2rad(o.get(k, 0.0)) for k in ('yawDeg', 'pitchDeg', 'rollDeg'))
    Rz = np.array([[np.cos(y), -np.sin(y), 0], [np.sin(y), np.cos(y), 0], [0, 0, 1]])
    Ry = np.array([[np.cos(p), 0, np.sin(p)], [0, 1, 0], [-np.sin(p), 0, np.cos(p)]])
    Rx = np.array([[1, 0, 0], [0, np.cos(r), -np.sin(r)], [0, np.sin(r), np.cos(r)]])
    return Rz @ Ry @ Rx
def offsets(a):
    d = a.get('spacingWavelengths', 0.5) * lam
    if a['kind'] == 'ula':
        N = a['elements']; P = np.zeros((N, 3)); P[:, 1] = (np.arange(N) - (N - 1) / 2) * d
    elif a['kind'] == 'upa':
        R, C = a['rows'], a['columns']; row, col = np.divmod(np.arange(R * C), C)
        P = np.zeros((R * C, 3)); P[:, 1] = (col - (C - 1) / 2) * d; P[:, 2] = (row - (R - 1) / 2) * d
    else:
        P = np.array(a['positions'], dtype=float)
    return P @ rot(a.get('orientation', {})).T
def unit(az, el):
    az, el = np.deg2rad(az), np.deg2rad(el)
    return np.array([np.cos(el) * np.cos(az), np.cos(el) * np.sin(az), np.sin(el)])
Pt = offsets(sc['transmitter']['array']); Pr = offsets(sc['receiver']['array'])
K = sc['band']['subcarriers']; f = (np.arange(K) - K // 2) * sc['band']['spacingHz']
ref = np.zeros((K, len(Pr), len(Pt)), dtype=complex)
for p in sc['paths']:
    rho = 10 ** (p['powerDb'] / 20) * np.exp(1j * np.deg2rad(p.get('phaseDeg', 0.0)))
    rt = np.exp(1j * k0 * (Pt @ unit(*p['aodDeg'])))
    rr = np.exp(1j * k0 * (Pr @ unit(*p['aoaDeg'])))
    ref += rho * np.exp(-2j * np.pi * f * p['delayS'])[:, None, None] * np.outer(rr, rt)[None]
errors = [float(np.linalg.norm(H[s] - ref) / np.linalg.norm(ref)) for s in range(H.shape[0])]
print(json.dumps({'dtype': str(H.dtype), 'shape': list(H.shape), 'errors': errors}))
`;
