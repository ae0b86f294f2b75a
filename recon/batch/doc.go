// Package batch holds the pieces of imaging many epochs of one target: splitting
// observations into epochs at gaps in time, hashing an epoch's inputs and settings so
// that a rerun can skip finished work, sharding a list of epochs over the tasks of a job array, the summary
// table of a batch, and the joint reconstruction of all epochs with a temporal
// regularizer. Package workflow runs a batch with them.
//
// # Epochs
//
// Clusters groups observation times (MJD) into epochs: sorted times belong to one epoch
// while consecutive times are at most gap days apart. A gap of half a day separates the
// nights of any site while keeping one night together (dataset.NightGap; common practice,
// no source).
//
// # Resuming
//
// Hash is the SHA-256 of the settings text and of the contents of every input file (each
// preceded by its length, so that no two different inputs give the same byte stream). An
// epoch's status file (JSON, written atomically after every other output of the epoch)
// records the hash; Complete reports whether a status file says the epoch finished with
// the same hash and all its outputs exist.
//
// # Sharding
//
// Shard{K, N} takes the epochs with 0-based index i where i mod N = K−1: every N-th epoch
// starting at the K-th. ShardFromEnv reads the job-array variables of the SLURM workload
// manager: SLURM_ARRAY_TASK_ID with SLURM_ARRAY_TASK_COUNT, or with SLURM_ARRAY_TASK_MIN
// and SLURM_ARRAY_TASK_MAX (task IDs from MIN to MAX; stepped arrays are not supported).
//
// # Joint imaging
//
// JointProblem is the reconstruction of all epochs together, an image cube along time
// solved by recon.SolveCube: its planes are the epochs, and it minimises
//
//	F(x_1..x_T) = Σ_t [ J_t(x_t/F_t) + μ_t R(x_t/F_t) + ρ_t (F_t − 1)² ] + λ Σ_{t>1} ‖x_t/F_t − x_{t−1}/F_{t−1}‖²,
//
// with F_t = Σx_t, J_t the weighted χ² of epoch t (recon.Objective, flux-normalised
// model), R the regularizer at the epoch's own weight μ_t, the flux term of recon.Solve
// (ρ_t the number of data of the epoch) and λ the temporal weight, the cube's spectral
// weight η of the quadratic smoothness across planes (recon.SpectralSmoothness) with the
// planes along time. The quadratic temporal term is the discrete form of a penalty on the
// time derivative of the image (Tikhonov regularization in time; common practice, no
// source). The automatic λ is the largest at which no epoch's χ²ᵣ rises by more than 5 %
// over that of its own image (recon.CubeProblem.SpectralSteps); when every weight of the
// search passes, or none does, the kept λ is at an edge of the searched range and
// JointWarnings says so.
package batch
