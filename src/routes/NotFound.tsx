import { Link } from "react-router";

export function NotFound() {
  return (
    <div className="p-10">
      <h1 className="text-2xl font-bold">Nothing at this address</h1>
      <p className="mt-2 text-ink-soft">The page may have moved, or the link is mistyped.</p>
      <Link to="/workshops" className="mt-4 inline-block text-calm underline">Go to your workshops</Link>
    </div>
  );
}
