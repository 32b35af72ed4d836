/**
 * The few parts of jStat 1.9.6 that Packledger uses; the package ships no types. The
 * module exports the jStat function object itself (UMD, `module.exports = jStat`), which
 * also carries itself as `jStat.jStat`.
 */
declare module 'jstat' {
	interface JStatStudentT {
		pdf(x: number, dof: number): number;
		cdf(x: number, dof: number): number;
		/** Quantile: the t with P(T ≤ t) = p. */
		inv(p: number, dof: number): number;
	}
	interface JStatChiSquare {
		cdf(x: number, dof: number): number;
		/** Quantile: the x with P(X ≤ x) = p. */
		inv(p: number, dof: number): number;
	}
	interface JStatStatic {
		studentt: JStatStudentT;
		chisquare: JStatChiSquare;
		/** Hyndman–Fan family in SciPy's (alphap, betap) form; the default 3/8, 3/8 is type 9, 1, 1 is type 7. */
		quantiles(
			arr: readonly number[],
			quantiles: readonly number[],
			alphap?: number,
			betap?: number
		): number[];
		percentile(arr: readonly number[], k: number, exclusive?: boolean): number;
		mean(arr: readonly number[]): number;
		stdev(arr: readonly number[], flag?: boolean): number;
		jStat: JStatStatic;
	}
	const jStat: JStatStatic;
	export default jStat;
}
