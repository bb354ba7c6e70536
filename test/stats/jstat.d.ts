// jstat 1.9.6 ships no type declarations; the tests use only the normal quantile.
declare module "jstat" {
  const jStat: { normal: { inv(p: number, mean: number, sd: number): number } };
  export default jStat;
}
