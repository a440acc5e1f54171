/** The engine thread's bundle URL (server/build/engineThread.ts); missing when running from source. */
declare module '#engine-thread' {
  const url: string
  export default url
}
