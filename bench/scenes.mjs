/**
 * Large scenes of our own for the tracer benchmark (bench/tracer-scale.mjs) and the geometry
 * tests: a street grid of box buildings and a finely triangulated hall.
 */

/**
 * A 10 x 10 grid of box buildings (400 facades) on a ground plane: blocks `blockM` square,
 * streets `streetM` wide, heights varying 12..33 m by a fixed rule; tx on a street, rx one
 * street over (around a corner). 28 GHz concrete facades and a concrete ground.
 */
export function streetGrid({ n = 10, blockM = 30, streetM = 12, ground = true } = {}) {
  const walls = [];
  const pitch = blockM + streetM;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      const x0 = i * pitch,
        y0 = j * pitch,
        x1 = x0 + blockM,
        y1 = y0 + blockM;
      const h = 12 + ((7 * i + 11 * j) % 8) * 3;
      const c = [
        [x0, y0],
        [x1, y0],
        [x1, y1],
        [x0, y1],
      ];
      for (let k = 0; k < 4; k++) {
        const a = c[k],
          b = c[(k + 1) % 4];
        walls.push({
          vertices: [
            [a[0], a[1], 0],
            [b[0], b[1], 0],
            [b[0], b[1], h],
            [a[0], a[1], h],
          ],
          material: k % 2 ? 'glass' : 'concrete',
        });
      }
    }
  }
  if (ground) {
    const e = n * pitch;
    walls.push({
      vertices: [
        [-streetM, -streetM, 0],
        [e, -streetM, 0],
        [e, e, 0],
        [-streetM, e, 0],
      ],
      material: 'concrete',
    });
  }
  const street = (k) => k * pitch - streetM / 2; // centre line of the k-th street
  return {
    scene: { walls, maxReflectionOrder: 3 },
    transmitter: [street(4) + 0.3 * pitch, street(5), 6],
    receiver: [street(5), street(5) + 0.6 * pitch, 1.5],
  };
}

/**
 * A 40 x 24 x 6 m hall whose six surfaces are triangulated on a regular grid, `triangles`
 * triangles in all (rounded to whole grids), as an imported mesh would arrive.
 */
export function triangulatedHall(triangles = 50000) {
  const L = 40,
    W = 24,
    H = 6;
  const faces = [
    // origin, edge u, edge v, lengths
    [[0, 0, 0], [1, 0, 0], [0, 1, 0], L, W],
    [[0, 0, H], [1, 0, 0], [0, 1, 0], L, W],
    [[0, 0, 0], [1, 0, 0], [0, 0, 1], L, H],
    [[0, W, 0], [1, 0, 0], [0, 0, 1], L, H],
    [[0, 0, 0], [0, 1, 0], [0, 0, 1], W, H],
    [[L, 0, 0], [0, 1, 0], [0, 0, 1], W, H],
  ];
  const area = 2 * (L * W + L * H + W * H);
  const cell = Math.sqrt((2 * area) / triangles); // two triangles per square cell
  const walls = [];
  for (const [o, u, v, lu, lv] of faces) {
    const nu = Math.max(1, Math.round(lu / cell)),
      nv = Math.max(1, Math.round(lv / cell));
    const p = (a, b) => [0, 1, 2].map((k) => o[k] + (a * lu * u[k]) / nu + (b * lv * v[k]) / nv);
    for (let a = 0; a < nu; a++)
      for (let b = 0; b < nv; b++) {
        walls.push({ vertices: [p(a, b), p(a + 1, b), p(a + 1, b + 1)] });
        walls.push({ vertices: [p(a, b), p(a + 1, b + 1), p(a, b + 1)] });
      }
  }
  return { scene: { walls, maxReflectionOrder: 2 }, transmitter: [5, 6, 3], receiver: [31, 17, 1.5] };
}
