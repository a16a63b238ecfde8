import { Link } from "react-router-dom";
import { buttonClass } from "../../../components/ui/form";

export function NotFoundPage() {
  return (
    <div className="mx-auto max-w-md rounded-xl border border-ink-200 bg-white p-5">
      <h1 className="text-xl font-bold">Page not found</h1>
      <p className="mt-2 text-ink-600">
        There is no page at this address. It may have moved, or the link is incomplete.
      </p>
      <p className="mt-4">
        <Link to="/" className={buttonClass.secondary}>
          Go home
        </Link>
      </p>
    </div>
  );
}
