"""The quarter cross-section: a graded tensor-product mesh and its P1 finite-element operators.

The channel section is -a <= y <= a (depth 2a), -b <= z <= b (width 2b).
By symmetry only the quarter 0 <= y <= a, 0 <= z <= b is meshed: u = 0 on
the walls y = a and z = b, du/dn = 0 (natural) on the symmetry lines y = 0
and z = 0.  Each rectangle of the tensor grid is cut by its diagonal into
two right triangles carrying linear (P1) elements, so that the gradient is
constant on each triangle and every integral of a function of |grad u| is
exact (Ciarlet 1978, The Finite Element Method for Elliptic Problems, ch. 2).

Grading: node spacing h(d) = (s/N) sigma(d/s) at a distance d from the
wall, s = min(a, b) the short half-size and N the cells across it,

    sigma(x) = 1 - 0.6 exp(-x/0.25) + 0.2 softplus((x - 1)/0.2),

finer towards the walls (steep velocity gradients, corners) and, along the
long side of a flat channel, growing linearly beyond one short half-size
from the side wall, where the flow is that of a slit to within
exp(-pi d / 2a) (White 1991, eq. 3-47).  Coarser meshes for Richardson
extrapolation take every other node, so the mesh family comes from one
mapping.

On right triangles of a tensor grid the P1 stiffness matrix is exactly the
separable five-point operator K = Ky (x) Mz + My (x) Kz with lumped 1-D
masses (the cotangents across the diagonals vanish), so a Poisson problem
is solved by diagonalising the two 1-D operators (Lynch, Rice & Thomas
1964, Numer. Math. 6, 185-199): the augmented Lagrangian's linear step
costs two small dense products per side.

Lengths [m]; areas [m^2].
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

#: grading of the node spacing (see module docstring)
WALL_REFINEMENT, WALL_LAYER = 0.6, 0.25
GROWTH, GROWTH_SMOOTHING = 1.0, 0.2
#: points of the tabulated node-count function
_SAMPLES = 40001


def spacing_factor(x):
    """sigma(x): node spacing in units of s/N at x = d/s short half-sizes from the wall [-]."""
    x = np.asarray(x, dtype=float)
    grow = GROWTH_SMOOTHING * np.logaddexp(0.0, (x - 1.0) / GROWTH_SMOOTHING)
    return 1.0 - WALL_REFINEMENT * np.exp(-x / WALL_LAYER) + GROWTH * grow


def graded_nodes(half_length: float, short_half: float, cells: int, multiple: int = 4) -> np.ndarray:
    """Nodes from the symmetry line (0) to the wall (``half_length``) [m].

    About ``cells`` cells across ``short_half``, graded by :func:`spacing_factor`;
    the number of cells is a multiple of ``multiple`` so that coarser meshes
    can take every other node.
    """
    z = np.linspace(0.0, half_length, _SAMPLES)
    density = cells / (short_half * spacing_factor((half_length - z) / short_half))
    count = np.concatenate([[0.0], np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(z))])
    total = max(multiple, multiple * int(round(count[-1] / multiple)))
    nodes = np.interp(np.linspace(0.0, count[-1], total + 1), count, z)
    nodes[0], nodes[-1] = 0.0, half_length
    return nodes


class QuarterMesh:
    """P1 triangles on the tensor grid ``depth_nodes`` x ``width_nodes`` of the quarter section.

    Attributes (SI): ``y`` (0..a) and ``z`` (0..b) node coordinates [m];
    ``area`` of each triangle [m^2]; ``grad_y``, ``grad_z`` sparse maps from
    the free nodal values to the constant gradient on each triangle [1/m];
    ``load`` = int phi_i dA for the free nodes [m^2]; ``triangles`` the
    node numbers (row-major over the full grid, walls included).
    """

    def __init__(self, depth_nodes, width_nodes):
        self.y = np.asarray(depth_nodes, dtype=float)
        self.z = np.asarray(width_nodes, dtype=float)
        self.cells = (self.y.size - 1, self.z.size - 1)
        self._poisson = None
        self._build()

    # --- construction -------------------------------------------------------

    def _build(self):
        ny, nz = self.cells
        idx = np.arange((ny + 1) * (nz + 1)).reshape(ny + 1, nz + 1)
        hy = np.repeat(np.diff(self.y), nz)
        hz = np.tile(np.diff(self.z), ny)
        n00, n10 = idx[:-1, :-1].ravel(), idx[1:, :-1].ravel()
        n01, n11 = idx[:-1, 1:].ravel(), idx[1:, 1:].ravel()
        zero = np.zeros_like(hy)
        # triangle A (n00, n10, n11) below the diagonal, B (n00, n11, n01) above it
        self.triangles = np.concatenate([np.stack([n00, n10, n11], 1), np.stack([n00, n11, n01], 1)])
        self.coef_y = np.concatenate([np.stack([-1 / hy, 1 / hy, zero], 1), np.stack([zero, 1 / hy, -1 / hy], 1)])
        self.coef_z = np.concatenate([np.stack([zero, -1 / hz, 1 / hz], 1), np.stack([-1 / hz, zero, 1 / hz], 1)])
        self.area = np.concatenate([0.5 * hy * hz, 0.5 * hy * hz])
        self.free_index = np.full(idx.size, -1)
        self.free_index[idx[:-1, :-1].ravel()] = np.arange(ny * nz)
        self.grad_y = self._gradient_matrix(self.coef_y)
        self.grad_z = self._gradient_matrix(self.coef_z)
        self.div_y, self.div_z = self.grad_y.T.tocsr(), self.grad_z.T.tocsr()
        full_load = np.bincount(self.triangles.ravel(), np.repeat(self.area / 3.0, 3), idx.size)
        self.full_load = full_load
        self.load = full_load[idx[:-1, :-1].ravel()]
        self._pattern = self._hessian_pattern()

    def _gradient_matrix(self, coef):
        rows = np.repeat(np.arange(self.area.size), 3)
        cols = self.free_index[self.triangles.ravel()]
        keep = cols >= 0
        shape = (self.area.size, self.cells[0] * self.cells[1])
        return sp.csr_matrix((coef.ravel()[keep], (rows[keep], cols[keep])), shape=shape)

    def _hessian_pattern(self):
        """CSR structure of a P1 matrix on the free nodes and where each local entry goes."""
        f = self.free_index[self.triangles]
        rows, cols = np.repeat(f, 3, axis=1).ravel(), np.tile(f, (1, 3)).ravel()
        keep = (rows >= 0) & (cols >= 0)
        n = self.cells[0] * self.cells[1]
        key, slot = np.unique(rows[keep] * n + cols[keep], return_inverse=True)
        indptr = np.searchsorted(key // n, np.arange(n + 1))
        return keep, slot, key % n, indptr, key.size

    # --- operators ------------------------------------------------------------

    @property
    def poisson(self) -> "FastPoisson":
        """The fast solver of the unit-coefficient stiffness system (built once)."""
        if self._poisson is None:
            self._poisson = FastPoisson(self)
        return self._poisson

    @property
    def free_count(self) -> int:
        return self.cells[0] * self.cells[1]

    @property
    def quarter_area(self) -> float:
        """a b [m^2]."""
        return float(self.y[-1] * self.z[-1])

    def gradient(self, u):
        """(du/dy, du/dz) on each triangle [1/s] from free nodal velocities u [m/s]."""
        return self.grad_y @ u, self.grad_z @ u

    def divergence(self, flux_y, flux_z):
        """Weak form sum_e A_e flux_e . grad phi_i on the free nodes [N/m per unit stress]."""
        return self.div_y @ (self.area * flux_y) + self.div_z @ (self.area * flux_z)

    def assemble(self, w_yy, w_yz, w_zz):
        """Sparse sum_e A_e grad phi_i^T W_e grad phi_j for symmetric 2x2 element tensors W_e."""
        by, bz = self.coef_y, self.coef_z
        local = (by[:, :, None] * (w_yy[:, None, None] * by[:, None, :] + w_yz[:, None, None] * bz[:, None, :])
                 + bz[:, :, None] * (w_yz[:, None, None] * by[:, None, :] + w_zz[:, None, None] * bz[:, None, :]))
        local *= self.area[:, None, None]
        keep, slot, indices, indptr, size = self._pattern
        data = np.bincount(slot, local.ravel()[keep], size)
        n = self.free_count
        return sp.csr_matrix((data, indices, indptr), shape=(n, n))

    def full_field(self, u):
        """Nodal values on the full grid (ny+1, nz+1), walls (u = 0) included."""
        ny, nz = self.cells
        out = np.zeros((ny + 1, nz + 1))
        out[:-1, :-1] = np.asarray(u).reshape(ny, nz)
        return out

    def integral(self, u) -> float:
        """int u dA over the quarter [m^2 * unit of u] (exact for P1)."""
        return float(self.load @ u)

    def coarsened(self) -> "QuarterMesh":
        """The mesh of every other node (cell counts must be even)."""
        if self.cells[0] % 2 or self.cells[1] % 2:
            raise ValueError(f"cannot halve a mesh of {self.cells} cells")
        return QuarterMesh(self.y[::2], self.z[::2])

    def prolong(self, coarse: "QuarterMesh", u_coarse):
        """Free nodal values on this mesh, interpolated bilinearly from a coarser mesh's solution."""
        full = coarse.full_field(u_coarse)
        along_y = np.stack([np.interp(self.y, coarse.y, full[:, j]) for j in range(full.shape[1])], 1)
        fine = np.stack([np.interp(self.z, coarse.z, row) for row in along_y], 0)
        return fine[:-1, :-1].ravel()

    def element_parent(self, coarse: "QuarterMesh"):
        """For each triangle here, the coarse triangle containing most of it (every-other-node meshes)."""
        ny, nz = self.cells
        i, j = np.divmod(np.arange(ny * nz), nz)
        parent_cell = (i // 2) * coarse.cells[1] + (j // 2)
        below = (i % 2 == 1) & (j % 2 == 0)  # sub-cell wholly below the coarse diagonal
        above = (i % 2 == 0) & (j % 2 == 1)
        cells = coarse.cells[0] * coarse.cells[1]
        parent_a = np.where(above, parent_cell + cells, parent_cell)
        parent_b = np.where(below, parent_cell, parent_cell + cells)
        return np.concatenate([parent_a, parent_b])

    def wall_nodes(self):
        """Node numbers along the walls from the middle of the y = a wall to the middle of z = b.

        Returns (nodes, arc) with the arc length [m] from (y, z) = (a, 0)
        along y = a to the corner (a, b), then along z = b to (0, b).
        """
        ny, nz = self.cells
        top = ny * (nz + 1) + np.arange(nz + 1)           # y = a, z from 0 to b
        side = np.arange(ny - 1, -1, -1) * (nz + 1) + nz  # z = b, y from a (excl.) down to 0
        arc = np.concatenate([self.z, self.z[-1] + (self.y[-1] - self.y[-2::-1])])
        return np.concatenate([top, side]), arc


class FastPoisson:
    """Solve K u = f for the P1 stiffness K of a :class:`QuarterMesh` (unit coefficient).

    K = Ky (x) Mz + My (x) Kz; with My^(-1/2) Ky My^(-1/2) = Vy Ly Vy^T (and
    the same in z), u = M^(-1/2) (Vy (x) Vz) (Ly (+) Lz)^(-1) (Vy (x) Vz)^T M^(-1/2) f
    (Lynch, Rice & Thomas 1964).
    """

    def __init__(self, mesh: QuarterMesh):
        (ky, my), (kz, mz) = _one_dimensional(mesh.y), _one_dimensional(mesh.z)
        self._sy, self._sz = 1.0 / np.sqrt(my), 1.0 / np.sqrt(mz)
        ly, self._vy = np.linalg.eigh(self._sy[:, None] * ky * self._sy[None, :])
        lz, self._vz = np.linalg.eigh(self._sz[:, None] * kz * self._sz[None, :])
        self._inverse = 1.0 / (ly[:, None] + lz[None, :])
        self._shape = (my.size, mz.size)

    def solve(self, f):
        """u with K u = f (f on the free nodes)."""
        scale = self._sy[:, None] * self._sz[None, :]
        g = np.asarray(f).reshape(self._shape) * scale
        g = self._vy @ ((self._vy.T @ g @ self._vz) * self._inverse) @ self._vz.T
        return (g * scale).ravel()


def _one_dimensional(x):
    """1-D P1 stiffness (natural at x[0], u = 0 at x[-1]) and lumped mass on the free nodes."""
    h = np.diff(x)
    n = h.size
    mass = np.zeros(n + 1)
    mass[:-1] += 0.5 * h
    mass[1:] += 0.5 * h
    main = np.zeros(n + 1)
    main[:-1] += 1.0 / h
    main[1:] += 1.0 / h
    stiffness = np.diag(main[:n]) - np.diag(1.0 / h[: n - 1], 1) - np.diag(1.0 / h[: n - 1], -1)
    return stiffness, mass[:n]


#: cells across the short half-size on the finest default mesh (see the benchmark)
DEFAULT_CELLS = 48


def mesh_hierarchy(half_depth: float, half_width: float, cells: int, levels: int = 3):
    """Nested meshes, finest first, each taking every other node of the one before."""
    short = min(half_depth, half_width)
    multiple = 2 ** (levels - 1)
    fine = QuarterMesh(graded_nodes(half_depth, short, cells, multiple),
                       graded_nodes(half_width, short, cells, multiple))
    meshes = [fine]
    for _ in range(levels - 1):
        meshes.append(meshes[-1].coarsened())
    return meshes

