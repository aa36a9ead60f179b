// Files bundled as text by esbuild (--loader:.txt=text): the worker's code.
declare module "*.txt" {
  const text: string;
  export default text;
}
