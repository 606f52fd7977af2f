// Package sweep plans and runs grids of t-SNE runs and owns the study on
// disk.
//
// A plan (Spec → Plan) is a set of lists — perplexities, learning rates,
// exaggerations, iteration counts, initialisations, gradient methods — and
// seeds. A setting is one combination of the lists; a run is a setting with
// one seed. Setting ids are the first 10 hex digits of the SHA-256 of a
// versioned canonical text of the setting's values (Setting.Canonical), and
// run ids are "<setting id>-<seed>", so a run has the same name on every
// machine, in every shard and after every resume. The ids are frozen by a
// golden test: changing Canonical would orphan every existing study.
//
// Execute does the work shared by the runs once: the input's neighbour
// lists are searched once, for the largest perplexity of the plan
// (k = min(n−1, ⌊3·perplexity⌋)), and truncated for smaller perplexities
// (exact k-nearest-neighbour lists nest: the first k of the k' > k nearest
// are the k nearest); the affinity matrix P is built once per perplexity
// and shared by every seed, learning rate, exaggeration and initialisation
// (van der Maaten 2014 computes P from the ⌊3u⌋ nearest neighbours for
// perplexity u); the PCA initialisation is computed once. Runs are
// independent and the engine is deterministic, so a study's contents do not
// depend on the number of jobs, threads or shards.
//
// The study directory holds study.json (plan, input, hash), one layout and
// one KL trace Parquet file per run, one small JSON record per finished run
// (done or failed), runs.parquet (rebuilt from the records) and the score
// tables under scores/. Every file is written atomically, so a run is
// finished exactly when its files verify; a killed sweep resumes where it
// stopped. Shards (Shard) deal the plan's runs round-robin and write only
// their own runs' files. A kill during a write leaves a ".NAME.tmp-*" file
// beside NAME: a run's own are removed when the run is redone; those of the
// shared files (study.json, runs.parquet, scores/) by an unsharded Execute,
// the study's only writer, whatever their age, and by a shard or Score only
// after 5 minutes, since a younger one may be another process's write in
// progress.
//
// Execute validates the data before it creates anything (Validate): data
// without variance are refused. Score stores a score that is undefined for
// a run (a Spearman correlation of distances that do not vary) as null;
// score tables that do not form one scoring at a single k (a kill between
// their renames) count as not scored (Study.ScoresProblem, ScoredK).
//
// References:
//   - C. Spearman. The proof and measurement of association between two things.
//     American Journal of Psychology 15, 1904.
//   - T. F. Chan, G. H. Golub, R. J. LeVeque. Algorithms for computing the sample
//     variance: analysis and recommendations. The American Statistician 37, 1983.
//   - L. van der Maaten, G. Hinton. Visualizing Data using t-SNE. JMLR 9, 2008.
//   - L. van der Maaten. Accelerating t-SNE using Tree-Based Algorithms. JMLR 15, 2014.
//   - D. Kobak, P. Berens. The art of using t-SNE for single-cell transcriptomics.
//     Nature Communications 10, 2019.
//   - J. C. Gower. Generalized Procrustes analysis. Psychometrika 40, 1975.
//   - J. Venna, S. Kaski. Neighborhood preservation in nonlinear projection methods:
//     an experimental study. ICANN 2001.
//   - Slurm job arrays, https://slurm.schedmd.com/job_array.html (SLURM_ARRAY_TASK_* variables).
//   - Kubernetes Indexed Jobs, https://kubernetes.io/docs/concepts/workloads/controllers/job/
//     (JOB_COMPLETION_INDEX).
package sweep
