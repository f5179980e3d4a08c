// skmeans ships no types; the benchmark uses only this call.
declare module 'skmeans' {
  export default function skmeans(data: number[][], k: number, init?: string | number[][], iterations?: number): {
    it: number;
    k: number;
    idxs: number[];
    centroids: number[][];
  };
}
