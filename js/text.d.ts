// Files bundled as text by esbuild (--loader:.txt=text): the worker's code.
declare module "*.txt" {
  const text: string;
  export default text;
}

// The stylesheet, bundled as text too (--loader:.css=text), for pages where no host applies `_css`.
declare module "*.css" {
  const text: string;
  export default text;
}
