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
// Joint is the objective of all epochs reconstructed together,
//
//	F(x_1..x_T) = Σ_t [ J_t(x_t) + μ_t R_t(x_t) + ρ_t (Σx_t − 1)² ] + λ Σ_{t>1} ‖x_t − x_{t−1}‖²,
//
// with J_t the weighted χ² of epoch t (recon.Objective, flux-normalised model), R_t its
// regularizer at weight μ_t, the flux term of recon.Solve (ρ_t the number of data of the
// epoch) and λ the temporal weight. The regularizer is evaluated on x_t itself rather
// than x_t/Σx_t: the flux term holds Σx_t at 1 to within a small fraction, so the two
// agree to that fraction. The quadratic temporal term is the discrete form of a
// penalty on the time derivative of the image (Tikhonov regularization in time; common
// practice, no source).
package batch
