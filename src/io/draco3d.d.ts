// The draco3d package ships no type declarations; src/io/draco.ts uses its decoder through `any`.
declare module 'draco3d' {
  const draco3d: { createDecoderModule(options: object): Promise<unknown>; createEncoderModule(options: object): Promise<unknown> };
  export default draco3d;
}
