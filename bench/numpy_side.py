"""The same work as pathweave, written the way a researcher would by hand in numpy: array
responses as matrices, the element products as one [L, Nr*Nt] matrix, one matmul over the path
axis per subframe, complex64 throughout, np.save at the end.

usage: numpy_side.py <workload.json> memory|e2e|e2e-checksum <out.npy or -> [check.npz]
  memory: time the per-subframe loop only (H preallocated and touched first), nothing saved
  e2e:    everything (responses, gains, loop, np.save); the caller times the whole process
  check:  with a pathweave .npz, use its gains and print the relative Frobenius error of H
Prints one JSON line. Layout of H: [S, K or taps, Nr, Nt] complex64, row-major.
"""
import json, resource, sys, time
import numpy as np

cfg = json.load(open(sys.argv[1]))
mode, out = sys.argv[2], sys.argv[3]
check = sys.argv[4] if len(sys.argv) > 4 else None
sc = cfg['scenario']
c = 299792458.0
lam = c / sc['carrierHz']
k0 = 2 * np.pi / lam


def upa_offsets(a):
    d = a.get('spacingWavelengths', 0.5) * lam
    R, C = a['rows'], a['columns']
    row, col = np.divmod(np.arange(R * C), C)
    p = np.zeros((R * C, 3))
    p[:, 1] = (col - (C - 1) / 2) * d  # columns along +y
    p[:, 2] = (row - (R - 1) / 2) * d  # rows along +z, row 0 lowest
    return p


def unit(deg):
    az, el = np.deg2rad(np.asarray(deg, float)).T
    return np.stack([np.cos(el) * np.cos(az), np.cos(el) * np.sin(az), np.sin(el)], axis=-1)


paths = sc['paths']
L = len(paths)
A_tx = np.exp(1j * k0 * unit([p['aodDeg'] for p in paths]) @ upa_offsets(sc['transmitter']['array']).T)  # [L, Nt]
A_rx = np.exp(1j * k0 * unit([p['aoaDeg'] for p in paths]) @ upa_offsets(sc['receiver']['array']).T)  # [L, Nr]
Nr, Nt = A_rx.shape[1], A_tx.shape[1]
P = (A_rx[:, :, None] * A_tx[:, None, :]).reshape(L, Nr * Nt).astype(np.complex64)
tau = np.array([p['delayS'] for p in paths])
if 'band' in sc:
    K = sc['band']['subcarriers']
    f = (np.arange(K) - K // 2) * sc['band']['spacingHz']
    D = np.exp(-2j * np.pi * np.outer(f, tau))  # [K, L]
else:
    K = sc['taps']['count']
    D = np.sinc(np.arange(K)[:, None] - tau[None, :] * sc['taps']['sampleRateHz']).astype(complex)
S = sc['timing']['subframes']
gamma = 10 ** (np.array([p['powerDb'] for p in paths]) / 10)
alpha = np.array(cfg['alpha'])

if check is not None:
    z = np.load(check)
    rho = z['gains']
    Href = z['H'] if 'H' in z.files else z['h']
    S = Href.shape[0]
else:
    rng = np.random.default_rng(1)
    rho = np.empty((S, L), np.complex128)
    g = np.sqrt(gamma / 2) * (rng.standard_normal(L) + 1j * rng.standard_normal(L))
    for s in range(S):
        rho[s] = g
        g = alpha * g + np.sqrt(1 - alpha ** 2) * np.sqrt(gamma / 2) * (rng.standard_normal(L) + 1j * rng.standard_normal(L))

H = np.empty((S, K, Nr, Nt), np.complex64)
if mode == 'memory':
    H.fill(0)  # touch the pages outside the timed loop
    H[0] = ((D * rho[0]).astype(np.complex64) @ P).reshape(K, Nr, Nt)  # warm-up
t0 = time.perf_counter()
for s in range(S):
    W = (D * rho[s][None, :]).astype(np.complex64)  # [K, L]
    H[s] = (W @ P).reshape(K, Nr, Nt)
loop = time.perf_counter() - t0
result = {'side': 'numpy', 'loopSeconds': loop, 'coefficients': int(H.size)}
if check is not None:
    result['relativeFrobenius'] = float(np.linalg.norm((H - Href).ravel()) / np.linalg.norm(Href.ravel()))
if mode in ('e2e', 'e2e-checksum'):
    t1 = time.perf_counter()
    np.save(out, H)
    result['saveSeconds'] = time.perf_counter() - t1
if mode == 'e2e-checksum':
    import hashlib
    t1 = time.perf_counter()
    result['sha256'] = hashlib.sha256(H.data).hexdigest()  # the tensor bytes in place, as pathweave's tensorSha256
    result['hashSeconds'] = time.perf_counter() - t1
result['maxRssBytes'] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
print(json.dumps(result))
