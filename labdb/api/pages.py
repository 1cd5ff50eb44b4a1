"""The tokens page: a logged-in user mints and revokes their own API tokens."""

from __future__ import annotations

from django import forms
from django.contrib import messages
from django.shortcuts import get_object_or_404, redirect, render
from django.urls import path
from django.views.decorators.http import require_POST

from labdb.accounts.decorators import role_required
from labdb.accounts.roles import MEMBER, VIEWER, has_role
from labdb.api.models import ApiToken, TokenScope
from labdb.api.tokens import mint_token, revoke_token


class MintForm(forms.Form):
    name = forms.CharField(
        max_length=80, required=False, help_text="What the token is for, e.g. 'bench 3 script'."
    )
    scope = forms.ChoiceField(choices=TokenScope.choices, initial=TokenScope.READ)

    def __init__(self, *args, user=None, **kwargs):
        super().__init__(*args, **kwargs)
        self.user = user

    def clean_scope(self):
        scope = self.cleaned_data["scope"]
        if scope == TokenScope.WRITE and not has_role(self.user, MEMBER):
            raise forms.ValidationError("a write token needs the member role; mint a read token")
        return scope


@role_required(VIEWER)
def tokens(request):
    form = MintForm(request.POST or None, user=request.user)
    new_key = None
    if request.method == "POST" and form.is_valid():
        token, new_key = mint_token(
            request.user, form.cleaned_data["scope"], form.cleaned_data["name"]
        )
        form = MintForm(user=request.user)
    rows = ApiToken.objects.filter(user=request.user)
    return render(request, "api/tokens.html", {"form": form, "tokens": rows, "new_key": new_key})


@require_POST
@role_required(VIEWER)
def revoke(request, pk: int):
    token = get_object_or_404(ApiToken, pk=pk, user=request.user)
    if revoke_token(token):
        messages.success(request, f"Token {token.prefix}… revoked; scripts using it now get 401.")
    return redirect("api-tokens")


urlpatterns = [
    path("", tokens, name="api-tokens"),
    path("<int:pk>/revoke", revoke, name="api-token-revoke"),
]
