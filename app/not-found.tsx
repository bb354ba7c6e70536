import Link from "next/link";

export default function NotFound() {
  return (
    <>
      <h1>Not found</h1>
      <p>There is no page at this address, or the record it names does not exist.</p>
      <p>
        <Link href="/">Go to the overview</Link>
      </p>
    </>
  );
}
