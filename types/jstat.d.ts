// jstat ships no types; declare the small part Keelson uses.
declare module 'jstat' {
  interface Dist {
    cdf(x: number, ...params: number[]): number;
    inv(p: number, ...params: number[]): number;
    pdf(x: number, ...params: number[]): number;
  }
  interface JStatStatic {
    normal: Dist;
    chisquare: Dist;
    centralF: Dist;
    studentt: Dist;
    beta: Dist;
    [key: string]: unknown;
  }
  const jstat: { jStat: JStatStatic };
  export default jstat;
}
