//! Everything the solver keeps between solves of one topology: the sparsity
//! pattern of the reduced pressure matrix, its symbolic Cholesky factor (AMD
//! fill-reducing ordering), the map link → matrix value slots, and every
//! scratch buffer of the Newton loop. Building it costs one ordering and one
//! symbolic analysis; each Newton iteration after that only refills values,
//! factors numerically and solves, without allocating.

use faer::Par;
use faer::Side;
use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::sparse::SymbolicSparseColMat;
use faer::sparse::linalg::amd;
use faer::sparse::linalg::cholesky::{SymbolicCholesky, SymmetricOrdering, factorize_symbolic_cholesky};

use super::SolveError;
use crate::network::HydraulicNetwork;

/// Marks "no slot / no reduced row" in the index maps.
pub(super) const NONE: usize = usize::MAX;

/// Reusable state of the network solver for one topology (node count, link
/// endpoints and reference node).
///
/// Build it once with [`SolverWorkspace::new`] and hand it to every
/// [`super::solve`] of that network: values (resistances, densities, pump
/// curves, closed valves, demands) may change freely between solves; when the
/// topology changes, `solve` notices (an exact comparison of the endpoints,
/// O(links)) and rebuilds the workspace, reporting it in
/// [`super::SolveReport::workspace_rebuilt`]. [`SolverWorkspace::default`]
/// is an empty workspace that the first solve builds.
#[derive(Default)]
pub struct SolverWorkspace {
    // --- topology fingerprint ---
    pub(super) node_count: usize,
    pub(super) reference_node: usize,
    pub(super) endpoints: Vec<(usize, usize)>,
    pub(super) built: bool,

    // --- index maps ---
    /// Node → row of the reduced system ([`NONE`] for the reference node).
    pub(super) reduced_row: Vec<usize>,
    /// Reduced row → value slot of its diagonal entry.
    pub(super) diag_slot: Vec<usize>,
    /// Link → value slot of its off-diagonal entry ([`NONE`] when one end is
    /// the reference node). Parallel links share a slot.
    pub(super) link_slot: Vec<usize>,
    /// Node → incident links (CSR), for the connectivity searches.
    pub(super) adjacency_ptr: Vec<usize>,
    pub(super) adjacency_link: Vec<usize>,

    // --- sparse matrix and factor ---
    /// Upper triangle of the reduced matrix, CSC (None when the network is
    /// the reference node alone).
    pub(super) pattern: Option<SymbolicSparseColMat<usize>>,
    pub(super) symbolic: Option<SymbolicCholesky<usize>>,
    pub(super) values: Vec<f64>,
    pub(super) factor_values: Vec<f64>,
    pub(super) stack: Option<MemBuffer>,

    // --- per-link scratch ---
    pub(super) flow_kg_s: Vec<f64>,
    pub(super) step_kg_s: Vec<f64>,
    pub(super) last_significant_step_kg_s: Vec<f64>,
    pub(super) sign_flips: Vec<u32>,
    pub(super) drop_pa: Vec<f64>,
    pub(super) slope_pa_s_kg: Vec<f64>,
    pub(super) static_pa: Vec<f64>,
    pub(super) base_flow_kg_s: Vec<f64>,
    pub(super) conductance: Vec<f64>,
    pub(super) open: Vec<bool>,

    // --- per-node scratch ---
    /// Node pressure relative to the reference node, Pa.
    pub(super) rel_pressure_pa: Vec<f64>,
    pub(super) rel_pressure_old_pa: Vec<f64>,
    /// Right-hand side / solution of the reduced system.
    pub(super) rhs: Vec<f64>,
    pub(super) visited: Vec<bool>,
    pub(super) queue: Vec<usize>,
    /// One node per part of the network cut off from the reference node by
    /// closed links; its diagonal is reinforced (see `solve`).
    pub(super) anchors: Vec<usize>,

    // --- kept from the last solve (see `solve`) ---
    /// Link law of each link at the last solve, already validated; a link
    /// whose law is unchanged is not validated again.
    pub(super) known_law: Vec<Option<crate::network::LinkLaw>>,
    /// Every link and node was validated at the last solve (the open flags,
    /// static terms and `known_law` are those of that network): what
    /// [`super::solve_changed`] builds on.
    pub(super) validated: bool,
    /// `drop_pa` and `slope_pa_s_kg` hold every open link's law evaluated
    /// at `flow_kg_s` (the last solve's final check), the slopes floored
    /// at `slope_floor`: a solve that starts from those very flows and is
    /// told which links changed evaluates only those first.
    pub(super) evaluated: bool,
    /// The slope floor of that evaluation, Pa·s/kg.
    pub(super) slope_floor: f64,
    /// The evaluation constants of each known law.
    pub(super) kernels: Vec<super::LinkKernel>,
    /// Flow at which `eval_drop_pa` / `eval_slope_pa_s_kg` were evaluated
    /// (NaN: nothing cached). A warm start from the last answer hits this
    /// for every link whose law did not change.
    pub(super) eval_flow_kg_s: Vec<f64>,
    /// Cached F_k at `eval_flow_kg_s`, Pa.
    pub(super) eval_drop_pa: Vec<f64>,
    /// Cached F'_k at `eval_flow_kg_s` (not floored), Pa·s/kg.
    pub(super) eval_slope_pa_s_kg: Vec<f64>,
    /// Open flags of the last solve and whether it had isolated parts: the
    /// connectivity search is skipped when nothing opened or closed.
    pub(super) last_open: Vec<bool>,
    pub(super) last_had_isolated: bool,
    /// `factor_values` hold the Cholesky factor of the matrix built from
    /// `conductance` (the last numeric factorisation succeeded, with no
    /// anchored part), for the open flags in `factored_open`.
    pub(super) factor_ready: bool,
    pub(super) factored_open: Vec<bool>,
    /// Node sums of the mass-balance check (scratch).
    pub(super) balance: Vec<f64>,
}

impl std::fmt::Debug for SolverWorkspace {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SolverWorkspace")
            .field("built", &self.built)
            .field("node_count", &self.node_count)
            .field("link_count", &self.endpoints.len())
            .field("reference_node", &self.reference_node)
            .field("matrix_nonzeros_upper", &self.values.len())
            .field("factor_nonzeros", &self.factor_values.len())
            .finish_non_exhaustive()
    }
}

impl SolverWorkspace {
    /// Builds the workspace for `net`'s topology: checks that every link
    /// endpoint exists, that no link joins a node to itself and that every
    /// node is connected to the reference node (through open or closed
    /// links), then computes the AMD ordering and the symbolic Cholesky
    /// factor of the reduced pressure matrix.
    ///
    /// Only the topology is read here; link laws and node values are checked
    /// by [`super::solve`].
    ///
    /// # Errors
    /// [`SolveError::EmptyNetwork`], [`SolveError::ReferenceNodeOutOfRange`],
    /// [`SolveError::LinkEndpointOutOfRange`], [`SolveError::SelfLoop`],
    /// [`SolveError::NodeNotConnected`], or [`SolveError::Factorisation`] if
    /// the sparse library fails (index overflow, out of memory).
    pub fn new(net: &HydraulicNetwork) -> Result<Self, SolveError> {
        check_topology(net)?;
        let n = net.nodes.len();
        let n_links = net.links.len();
        let reference = net.reference_node;
        let endpoints: Vec<(usize, usize)> = net.links.iter().map(|l| (l.from, l.to)).collect();

        // Node → incident links (CSR).
        let mut adjacency_ptr = vec![0usize; n + 1];
        for &(i, j) in &endpoints {
            adjacency_ptr[i + 1] += 1;
            adjacency_ptr[j + 1] += 1;
        }
        for v in 0..n {
            adjacency_ptr[v + 1] += adjacency_ptr[v];
        }
        let mut fill = adjacency_ptr.clone();
        let mut adjacency_link = vec![0usize; 2 * n_links];
        for (k, &(i, j)) in endpoints.iter().enumerate() {
            adjacency_link[fill[i]] = k;
            fill[i] += 1;
            adjacency_link[fill[j]] = k;
            fill[j] += 1;
        }

        let mut ws = Self {
            node_count: n,
            reference_node: reference,
            endpoints,
            built: true,
            adjacency_ptr,
            adjacency_link,
            visited: vec![false; n],
            queue: Vec::with_capacity(n),
            ..Self::default()
        };
        if let Some(node) = ws.first_unreachable_node(|_| true) {
            return Err(SolveError::NodeNotConnected { node, reference_node: reference });
        }

        // Reduced rows: every node but the reference, in node order.
        let mut reduced_row = vec![NONE; n];
        let mut next = 0usize;
        for (v, row) in reduced_row.iter_mut().enumerate() {
            if v != reference {
                *row = next;
                next += 1;
            }
        }
        let n_red = next;

        let (mut reduced_row, n_red) = (reduced_row, n_red);
        let mut built = build_pattern(&ws.endpoints, &reduced_row, n_red, n_links);

        if n_red > 0 {
            // Fill-reducing order (approximate minimum degree) of the
            // reduced rows; the rows are then numbered in that order itself
            // and analysed without reordering, so the numeric factorisation
            // reads the matrix as it is assembled instead of permuting it on
            // every iteration. Only the ordering is computed here, not a
            // symbolic factor that would be thrown away: the same order and
            // fill as an AMD-ordered analysis, one analysis instead of two.
            let mut order = vec![0usize; n_red];
            let mut inverse = vec![0usize; n_red];
            let mut amd_mem = MemBuffer::try_new(amd::order_scratch::<usize>(n_red, built.nnz))
                .map_err(|_| SolveError::Factorisation("out of memory for the ordering".into()))?;
            amd::order(
                &mut order,
                &mut inverse,
                built.pattern.as_ref(),
                amd::Control::default(),
                MemStack::new(&mut amd_mem),
            )
            .map_err(|e| SolveError::Factorisation(format!("ordering: {e:?}")))?;
            drop(amd_mem);
            reduced_row.iter_mut().filter(|r| **r != NONE).for_each(|r| *r = inverse[*r]);
            built = build_pattern(&ws.endpoints, &reduced_row, n_red, n_links);
            let symbolic = factorize_symbolic_cholesky(
                built.pattern.as_ref(),
                Side::Upper,
                SymmetricOrdering::Identity,
                Default::default(),
            )
            .map_err(|e| SolveError::Factorisation(format!("symbolic analysis: {e:?}")))?;
            let req = StackReq::any_of(&[
                symbolic.factorize_numeric_llt_scratch::<f64>(Par::Seq, Default::default()),
                symbolic.solve_in_place_scratch::<f64>(1, Par::Seq),
            ]);
            let stack = MemBuffer::try_new(req)
                .map_err(|_| SolveError::Factorisation("out of memory for the factor workspace".into()))?;
            ws.factor_values = vec![0.0; symbolic.len_val()];
            ws.values = vec![0.0; built.nnz];
            ws.symbolic = Some(symbolic);
            ws.stack = Some(stack);
        }
        ws.diag_slot = built.diag_slot;
        ws.link_slot = built.link_slot;
        if n_red > 0 {
            ws.pattern = Some(built.pattern);
        }

        ws.reduced_row = reduced_row;
        ws.flow_kg_s = vec![0.0; n_links];
        ws.step_kg_s = vec![0.0; n_links];
        ws.last_significant_step_kg_s = vec![0.0; n_links];
        ws.sign_flips = vec![0; n_links];
        ws.drop_pa = vec![0.0; n_links];
        ws.slope_pa_s_kg = vec![0.0; n_links];
        ws.static_pa = vec![0.0; n_links];
        ws.base_flow_kg_s = vec![0.0; n_links];
        ws.conductance = vec![0.0; n_links];
        ws.open = vec![true; n_links];
        ws.rel_pressure_pa = vec![0.0; n];
        ws.rel_pressure_old_pa = vec![0.0; n];
        ws.rhs = vec![0.0; n_red];
        ws.anchors = Vec::with_capacity(n);
        ws.known_law = vec![None; n_links];
        ws.kernels = vec![super::LinkKernel::Quadratic(0.0); n_links];
        ws.eval_flow_kg_s = vec![f64::NAN; n_links];
        ws.eval_drop_pa = vec![0.0; n_links];
        ws.eval_slope_pa_s_kg = vec![0.0; n_links];
        ws.last_open = Vec::new();
        ws.factor_ready = false;
        ws.factored_open = Vec::new();
        Ok(ws)
    }

    /// True when this workspace was built for `net`'s topology.
    #[must_use]
    pub fn matches(&self, net: &HydraulicNetwork) -> bool {
        self.matches_counts(net) && self.endpoints.iter().zip(&net.links).all(|(&(i, j), l)| i == l.from && j == l.to)
    }

    /// [`SolverWorkspace::matches`] without the endpoint comparison: built,
    /// same node count, reference node and link count.
    pub(super) fn matches_counts(&self, net: &HydraulicNetwork) -> bool {
        self.built
            && self.node_count == net.nodes.len()
            && self.reference_node == net.reference_node
            && self.endpoints.len() == net.links.len()
    }

    /// Pressure drop F_k of each link along its direction at the flows of
    /// the last solve, Pa, static term excluded (0 for closed links): what
    /// [`super::link_dp`] gives at [`super::SolveReport::flows_kg_s`], without
    /// evaluating the laws again. Empty before the first solve.
    #[must_use]
    pub fn link_drops_pa(&self) -> &[f64] {
        &self.drop_pa
    }

    /// Number of stored entries of the upper triangle of the reduced matrix.
    #[must_use]
    pub fn matrix_nonzeros(&self) -> usize {
        self.values.len()
    }

    /// Number of stored entries of the Cholesky factor (fill included).
    #[must_use]
    pub fn factor_nonzeros(&self) -> usize {
        self.factor_values.len()
    }

    /// Breadth-first search from the reference node through the links for
    /// which `usable(link)` holds; returns the first node not reached (and
    /// leaves `visited` marking the reached ones).
    pub(super) fn first_unreachable_node(&mut self, usable: impl Fn(usize) -> bool) -> Option<usize> {
        self.visited.iter_mut().for_each(|v| *v = false);
        self.flood_from(self.reference_node, &usable);
        self.visited.iter().position(|&v| !v)
    }

    /// Marks every node reachable from `start` through usable links; the
    /// nodes reached are left in `queue` (in visiting order).
    pub(super) fn flood_from(&mut self, start: usize, usable: &impl Fn(usize) -> bool) {
        self.queue.clear();
        self.visited[start] = true;
        self.queue.push(start);
        let mut head = 0usize;
        while head < self.queue.len() {
            let v = self.queue[head];
            head += 1;
            for &k in &self.adjacency_link[self.adjacency_ptr[v]..self.adjacency_ptr[v + 1]] {
                if !usable(k) {
                    continue;
                }
                let (i, j) = self.endpoints[k];
                let other = if i == v { j } else { i };
                if !self.visited[other] {
                    self.visited[other] = true;
                    self.queue.push(other);
                }
            }
        }
    }
}

/// The upper-triangle pattern of the reduced matrix and the value slots.
struct Pattern {
    pattern: SymbolicSparseColMat<usize>,
    nnz: usize,
    diag_slot: Vec<usize>,
    link_slot: Vec<usize>,
}

/// Upper-triangle pattern (row < col off the diagonal), CSC, for the reduced
/// row numbering `reduced_row`: sort the off-diagonal pairs by (col, row),
/// drop duplicates (parallel links); the diagonal is stored last in its
/// column.
fn build_pattern(endpoints: &[(usize, usize)], reduced_row: &[usize], n_red: usize, n_links: usize) -> Pattern {
    // Off-diagonal entries (row < col) bucketed by column in two counting
    // passes, then sorted and deduplicated within each (short) column: linear
    // in the number of links, where sorting all pairs was n·log n (a tenth
    // of the symbolic step at 50,000 emitters).
    let entry = |&(i, j): &(usize, usize)| {
        let (ri, rj) = (reduced_row[i], reduced_row[j]);
        (ri != NONE && rj != NONE).then(|| (ri.max(rj), ri.min(rj)))
    };
    let mut bucket_ptr = vec![0usize; n_red + 1];
    for (col, _) in endpoints.iter().filter_map(entry) {
        bucket_ptr[col + 1] += 1;
    }
    for col in 0..n_red {
        bucket_ptr[col + 1] += bucket_ptr[col];
    }
    let mut bucket = vec![0usize; bucket_ptr[n_red]];
    let mut fill = bucket_ptr.clone();
    for (col, row) in endpoints.iter().filter_map(entry) {
        bucket[fill[col]] = row;
        fill[col] += 1;
    }
    drop(fill);
    // Each column: its distinct rows ascending, then the diagonal (the
    // largest row of the upper triangle).
    let mut col_ptr = vec![0usize; n_red + 1];
    let mut row_idx = Vec::with_capacity(bucket.len() + n_red);
    let mut diag_slot = vec![0usize; n_red];
    for col in 0..n_red {
        let rows = &mut bucket[bucket_ptr[col]..bucket_ptr[col + 1]];
        rows.sort_unstable();
        let mut last = NONE;
        for &row in rows.iter() {
            if row != last {
                row_idx.push(row);
                last = row;
            }
        }
        diag_slot[col] = row_idx.len();
        row_idx.push(col);
        col_ptr[col + 1] = row_idx.len();
    }
    let nnz = row_idx.len();
    let mut link_slot = vec![NONE; n_links];
    for (k, &(i, j)) in endpoints.iter().enumerate() {
        let (ri, rj) = (reduced_row[i], reduced_row[j]);
        if ri != NONE && rj != NONE {
            let (col, row) = (ri.max(rj), ri.min(rj));
            let rows = &row_idx[col_ptr[col]..col_ptr[col + 1]];
            if let Ok(pos) = rows.binary_search(&row) {
                link_slot[k] = col_ptr[col] + pos;
            }
        }
    }
    let pattern = SymbolicSparseColMat::new_checked(n_red, n_red, col_ptr, None, row_idx);
    Pattern { pattern, nnz, diag_slot, link_slot }
}

/// Index checks of the topology (before anything is indexed).
fn check_topology(net: &HydraulicNetwork) -> Result<(), SolveError> {
    let n = net.nodes.len();
    if n == 0 {
        return Err(SolveError::EmptyNetwork);
    }
    if net.reference_node >= n {
        return Err(SolveError::ReferenceNodeOutOfRange { reference_node: net.reference_node, node_count: n });
    }
    for (link, l) in net.links.iter().enumerate() {
        for node in [l.from, l.to] {
            if node >= n {
                return Err(SolveError::LinkEndpointOutOfRange { link, node, node_count: n });
            }
        }
        if l.from == l.to {
            return Err(SolveError::SelfLoop { link, node: l.from });
        }
    }
    Ok(())
}
