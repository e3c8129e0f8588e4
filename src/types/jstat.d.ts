// Minimal typings for the parts of jstat this project uses (jstat ships none).
declare module 'jstat' {
  interface JStatStatic {
    gammaln(x: number): number;
    lowRegGamma(a: number, x: number): number;
    ibeta(x: number, a: number, b: number): number;
    gammapinv(p: number, a: number): number;
    normal: { inv(p: number, mean: number, sd: number): number };
    binomial: { cdf(k: number, n: number, p: number): number };
  }
  const jStat: JStatStatic;
  export default jStat;
  export { jStat };
}
