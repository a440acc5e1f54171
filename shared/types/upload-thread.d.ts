/** The URL of the bundled upload thread (server/build/threadBundle.ts makes it at build time). */
declare module '#upload-thread' {
  const url: string
  export default url
}
