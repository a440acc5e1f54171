/** The engine thread's bundle URL (server/build/threadBundle.ts); missing when running from source. */
declare module '#engine-thread' {
  const url: string
  export default url
}
