// Keeps what a person types before the page's script has taken over (hydration). On a slow
// phone the form is on screen seconds before the script arrives; hydration then sets every
// field back to the value the server rendered, and the typing is lost. This records each
// field the person changes until the root layout calls `restore()` after hydration, which
// puts the person's value back and fires `input`/`change` so the page's state follows.
(function () {
	var touched = [];
	var done = false;
	function note(e) {
		var el = e.target;
		if (done || !el || !('value' in el) || el.type === 'file' || el.type === 'password') return;
		if (touched.indexOf(el) === -1) touched.push(el);
		el.__keptValue = el.value;
		el.__keptChecked = el.checked;
	}
	document.addEventListener('input', note, true);
	document.addEventListener('change', note, true);
	window.__packledgerKeepInput = {
		restore: function () {
			done = true;
			document.removeEventListener('input', note, true);
			document.removeEventListener('change', note, true);
			for (var i = 0; i < touched.length; i++) {
				var el = touched[i];
				if (!el.isConnected) continue;
				var isBox = el.type === 'checkbox' || el.type === 'radio';
				if (isBox ? el.checked === el.__keptChecked : el.value === el.__keptValue) continue;
				if (isBox) el.checked = el.__keptChecked;
				else el.value = el.__keptValue;
				el.dispatchEvent(new Event('input', { bubbles: true }));
				el.dispatchEvent(new Event('change', { bubbles: true }));
			}
			touched = [];
		}
	};
})();
