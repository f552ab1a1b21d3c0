// The part of fili (IIR filter design and filtering, MIT) that the sway processing uses; the package ships no types.
declare module "fili" {
  interface Biquad {
    a: number[];
    b: number[];
    k: number;
  }
  interface CascadeDesigner {
    lowpass(params: {
      order: number;
      characteristic: "butterworth" | "bessel";
      Fs: number;
      Fc: number;
      preGain?: boolean;
    }): Biquad[];
  }
  interface IirFilterInstance {
    multiStep(input: number[], overwrite?: boolean): number[];
    responsePoint(params: { Fs: number; Fr: number }): { magnitude: number; phase: number; dBmagnitude: number };
  }
  const fili: {
    CalcCascades: new () => CascadeDesigner;
    IirFilter: new (coefficients: Biquad[]) => IirFilterInstance;
  };
  export default fili;
}
