// jstat ships no type declarations; only the parts Rateledger calls are declared here.
declare module 'jstat' {
  interface ContinuousDistribution {
    pdf(x: number, ...params: number[]): number;
    cdf(x: number, ...params: number[]): number;
    inv(p: number, ...params: number[]): number;
  }
  export const jStat: {
    studentt: ContinuousDistribution;
    centralF: ContinuousDistribution;
    chisquare: ContinuousDistribution;
    normal: ContinuousDistribution;
    beta: ContinuousDistribution;
    ibeta(x: number, a: number, b: number): number;
    ibetainv(p: number, a: number, b: number): number;
    gammaln(x: number): number;
  };
  export default jStat;
}
